// Sets up a job with a published breakdown and a roster learner through the real API.
import { randomUUID } from 'node:crypto'
import type { Client } from './http'
import type { BreakdownContent } from '../../shared/schemas/breakdown'

export function slicerContent(): BreakdownContent {
  const kp = (kind: 'quality' | 'safety' | 'knack', text: string, reason: string) => ({ id: randomUUID(), kind, text, reason, photoId: null })
  return {
    units: [{
      id: randomUUID(),
      title: '',
      steps: [
        { id: randomUUID(), text: 'Stop and lock out slicer', photoId: null, keyPoints: [kp('safety', 'Own padlock on the isolator', 'Nobody can start the drive')] },
        { id: randomUUID(), text: 'Open the blade guard', photoId: null, keyPoints: [kp('knack', 'Lift both latches together', 'One latch jams the guard')] },
        { id: randomUUID(), text: 'Fit the new blade set', photoId: null, keyPoints: [kp('quality', 'Seat both frame pins', 'A half-seated set tears loaves')] },
      ],
    }],
  }
}

export async function publishedJob(client: Client, content: BreakdownContent = slicerContent(), title = 'Change the slicer blade set') {
  const job = await client.post('/api/jobs', { title, hazards: [{ category: 'sharp-edges', description: 'Blades' }] })
  if (job.status !== 201) throw new Error(`job: ${job.status} ${job.text}`)
  const draft = await client.post(`/api/jobs/${job.body.id}/versions`)
  if (draft.status !== 201) throw new Error(`draft: ${draft.status} ${draft.text}`)
  const saved = await client.patch(`/api/versions/${draft.body.id}`, { revision: draft.body.revision, content })
  if (saved.status !== 200) throw new Error(`save: ${saved.status} ${saved.text}`)
  const published = await client.post(`/api/versions/${draft.body.id}/publish`, { changeNote: 'First version.' })
  if (published.status !== 200) throw new Error(`publish: ${published.status} ${published.text}`)
  return { jobId: job.body.id as string, versionId: draft.body.id as string, content }
}

export async function rosterLearner(client: Client, name = 'Ilse Brannagh') {
  const res = await client.post('/api/learners', { name })
  if (res.status !== 201) throw new Error(`learner: ${res.status} ${res.text}`)
  return res.body.id as string
}

/** A whole clean try-out (T1–T4) of a content, as one tablet would record it. */
export function cleanTryout(lessonId: string, deviceId: string, content: BreakdownContent, startSeq = 1, startTime = 10_000) {
  const steps = content.units.flatMap(u => u.steps)
  const kps = steps.flatMap(s => s.keyPoints)
  let seq = startSeq - 1
  const ev = (pass: string, kind: string, elementId: string | null, value: string | null) => {
    seq += 1
    return { id: randomUUID(), lessonId, pass, elementId, kind, value, clientTime: startTime + seq, deviceId, seq }
  }
  return [
    ...steps.map(s => ev('T1-1', 'mark', s.id, 'unaided')),
    ev('T2-1', 'order-all', null, null),
    ...steps.map(s => ev('T2-1', 'mark', s.id, 'unaided')),
    ...kps.map(k => ev('T3-1', 'mark', k.id, 'unaided')),
    ...kps.map(k => ev('T4-1', 'mark', k.id, 'unaided')),
  ]
}
