// Sets up what the people and study tests need through the real API, as people would: a learner
// on the roster linked to an account (invited for that roster entry), lessons pushed from a
// tablet with chosen marks, and spot checks with their marks (POST /api/sync).
import { randomUUID } from 'node:crypto'
import type { Client } from './http'
import { Client as HttpClient, uniqueAddress } from './http'
import { PASSWORD, tokenFrom, uniqueEmail } from './accounts'
import type { TestServer } from './server'
import type { BreakdownContent } from '../../shared/schemas/breakdown'

const DAY = 86_400_000

/** A roster learner with an account of their own: the admin adds them, then invites them for that entry. */
export async function linkedLearner(server: TestServer, admin: Client, name: string) {
  const roster = await admin.post('/api/learners', { name })
  if (roster.status !== 201) throw new Error(`learner: ${roster.status} ${roster.text}`)
  const email = uniqueEmail('learner')
  const invite = await admin.post('/api/invites', { email, role: 'learner', learnerId: roster.body.id })
  if (invite.status !== 201) throw new Error(`invite: ${invite.status} ${invite.text}`)
  const mail = await server.waitForMail(m => m.to.includes(email))
  const client = new HttpClient(server.url, uniqueAddress())
  const accepted = await client.post('/api/invites/accept', { token: tokenFrom(mail.links[0]!), name, password: PASSWORD })
  if (accepted.status !== 200) throw new Error(`accept: ${accepted.status} ${accepted.text}`)
  return { learnerId: roster.body.id as string, client, email, userId: accepted.body.user.id as string }
}

export interface Taught { learnerId: string, jobId: string, versionId: string, content: BreakdownContent }

type Mark = 'unaided' | 'cued' | 'missed'

/**
 * One lesson pushed from a tablet: T1–T4 with every element marked `mark` except the key points
 * named in `cued` (marked cued in T3), signed off `daysAgo` days before now with `decision`.
 */
export async function teach(coach: { client: Client, userId: string }, what: Taught, options: { daysAgo: number, decision?: 'ready' | 'another-pass' | null, cued?: string[], signedOff?: boolean }) {
  const deviceId = randomUUID()
  const lessonId = randomUUID()
  const at = Date.now() - options.daysAgo * DAY
  const steps = what.content.units.flatMap(u => u.steps)
  const kps = steps.flatMap(s => s.keyPoints)
  const cued = new Set(options.cued ?? [])
  let seq = 0
  const ev = (pass: string, kind: string, elementId: string | null, value: Mark | null) => {
    seq += 1
    return { id: randomUUID(), lessonId, pass, elementId, kind, value, clientTime: at + seq, deviceId, seq }
  }
  const events = [
    ...steps.map(s => ev('T1-1', 'mark', s.id, 'unaided')),
    ev('T2-1', 'order-all', null, null),
    ...steps.map(s => ev('T2-1', 'mark', s.id, 'unaided')),
    ...kps.map(k => ev('T3-1', 'mark', k.id, cued.has(k.id) ? 'cued' : 'unaided')),
    ...kps.map(k => ev('T4-1', 'mark', k.id, 'unaided')),
  ]
  const signedOff = options.signedOff ?? true
  const lesson = {
    id: lessonId, coachUserId: coach.userId, learnerId: what.learnerId, jobId: what.jobId, versionId: what.versionId, place: 'Slicer 2',
    startedAt: at - 1_800_000, updatedAt: at + seq + 1, decision: signedOff ? (options.decision ?? 'ready') : null, signedOffAt: signedOff ? at + seq + 1 : null,
  }
  const res = await coach.client.post('/api/sync', { deviceId, lessons: [lesson], events, checks: [] })
  if (res.status !== 200 || res.body.rejected?.length) throw new Error(`lesson push: ${res.status} ${res.text}`)
  return { lessonId, signedOffAt: lesson.signedOffAt }
}

/** A finished spot check pushed from a tablet, every element marked as `marks` says (unaided by default). */
export async function spotCheck(coach: { client: Client, userId: string }, what: Taught, options: { daysAgo: number, lessonId?: string | null, marks?: Record<string, Mark>, intervalIndex?: number }) {
  const deviceId = randomUUID()
  const checkId = randomUUID()
  const at = Date.now() - options.daysAgo * DAY
  const steps = what.content.units.flatMap(u => u.steps)
  const elements = [...steps.map(s => s.id), ...steps.flatMap(s => s.keyPoints.map(k => k.id))]
  const events = elements.map((elementId, i) => ({ id: randomUUID(), checkId, elementId, kind: 'mark', value: options.marks?.[elementId] ?? 'unaided', clientTime: at + i + 1, deviceId, seq: i + 1 }))
  const check = {
    id: checkId, coachUserId: coach.userId, learnerId: what.learnerId, jobId: what.jobId, versionId: what.versionId, lessonId: options.lessonId ?? null,
    startedAt: at, updatedAt: at + elements.length + 1, elements, note: '', finishedAt: at + elements.length + 1, intervalIndex: options.intervalIndex ?? 0,
  }
  const res = await coach.client.post('/api/sync', { deviceId, lessons: [], events, checks: [check] })
  if (res.status !== 200 || res.body.rejected?.length) throw new Error(`check push: ${res.status} ${res.text}`)
  return { checkId }
}
