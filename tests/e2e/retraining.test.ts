// Refreshers after a new version (issue 6, item 3), over HTTP against the built server: publishing
// v2 flags whoever is ready on v1, the retraining routes list them with what changed, and a
// refresher lesson on v2 that tries out only the changed elements clears the flag.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { addMember, signUp } from '../support/accounts'
import { cleanTryout, publishedJob, rosterLearner } from '../support/breakdowns'
import type { BreakdownContent } from '../../shared/schemas/breakdown'
import type { JobRetraining, RetrainingEntry } from '../../shared/types/retraining'
import { focusContent } from '../../shared/utils/refresher'

let server: TestServer
let admin: Awaited<ReturnType<typeof signUp>>
let coach: Awaited<ReturnType<typeof addMember>>
let job: Awaited<ReturnType<typeof publishedJob>>
let learnerId: string
let otherLearnerId: string
const deviceId = randomUUID()
let seq = 0

beforeAll(async () => {
  server = await startServer()
  admin = await signUp(server)
  coach = await addMember(server, admin.client, 'coach')
  job = await publishedJob(admin.client)
  learnerId = await rosterLearner(coach.client, 'Ilse Brannagh')
  otherLearnerId = await rosterLearner(coach.client, 'Tomas Quillfeather')
}, 120_000)
afterAll(() => server?.stop())

/** A lesson pushed from one tablet: a clean try-out of `content`, signed off with `decision`. */
async function pushLesson(versionId: string, content: BreakdownContent, options: { learner?: string, focus?: string[] | null, decision?: 'ready' | 'another-pass' | null, signedOff?: boolean } = {}) {
  const lessonId = randomUUID()
  const events = cleanTryout(lessonId, deviceId, content, seq + 1, 100_000 + seq)
  seq += events.length + 1
  const signedOffAt = options.signedOff === false ? null : 200_000 + seq
  const lesson = {
    id: lessonId, coachUserId: coach.userId, learnerId: options.learner ?? learnerId, jobId: job.jobId, versionId, place: 'Slicer 2',
    startedAt: 100_000, updatedAt: 200_000 + seq, decision: options.decision === undefined ? 'ready' : options.decision, signedOffAt, focus: options.focus ?? null,
  }
  const res = await coach.client.post('/api/sync', { deviceId, lessons: [lesson], events, checks: [] })
  expect(res.status, res.text).toBe(200)
  expect(res.body.rejected).toEqual([])
  return { lessonId, score: res.body.scores[lessonId] }
}

async function retraining(client = coach.client): Promise<JobRetraining> {
  const res = await client.get(`/api/jobs/${job.jobId}/retraining`)
  expect(res.status, res.text).toBe(200)
  return res.body
}

let v2: { id: string, content: BreakdownContent }
let newKeyPointId: string

describe('retraining after a new version', () => {
  it('lists nobody while everyone trained is on the current version', async () => {
    await pushLesson(job.versionId, job.content)
    const list = await retraining()
    expect(list.current?.id).toBe(job.versionId)
    expect(list.current?.number).toBe(1)
    expect(list.people).toEqual([])
  })

  it('publishing v2 with a reworded step and a new safety key point flags the learner, and says how many', async () => {
    const draft = await admin.client.post(`/api/jobs/${job.jobId}/versions`)
    expect(draft.status).toBe(201)
    const read = await admin.client.get(`/api/versions/${draft.body.id}`)
    const content = structuredClone(read.body.content) as BreakdownContent
    const steps = content.units[0]!.steps
    // The draft copies v1 with the same lineage ids (DEVELOPERS.md, "Breakdown versions").
    expect(steps.map(s => s.id)).toEqual(job.content.units[0]!.steps.map(s => s.id))
    steps[1]!.text = 'Swing the blade guard fully open'
    newKeyPointId = randomUUID()
    steps[2]!.keyPoints.push({ id: newKeyPointId, kind: 'safety', text: 'Cut-resistant gloves on both hands', reason: 'The blade edges cut through bare skin', photoId: null })
    const saved = await admin.client.patch(`/api/versions/${draft.body.id}`, { revision: read.body.revision, content })
    expect(saved.status, saved.text).toBe(200)
    const published = await admin.client.post(`/api/versions/${draft.body.id}/publish`, { changeNote: 'Guard opened fully; gloves for the blade set.' })
    expect(published.status, published.text).toBe(200)
    expect(published.body.flaggedForRefresher).toBe(1)
    v2 = { id: draft.body.id, content }
  })

  it('lists the learner with the version they were trained on, the current one, what changed and the refresher ids', async () => {
    const list = await retraining()
    expect(list.current).toEqual({ id: v2.id, number: 2 })
    expect(list.people).toHaveLength(1)
    const person = list.people[0]!
    expect(person).toMatchObject({
      learnerId,
      learnerName: 'Ilse Brannagh',
      jobId: job.jobId,
      jobTitle: 'Change the slicer blade set',
      trainedVersion: { id: job.versionId, number: 1 },
      currentVersion: { id: v2.id, number: 2 },
    })
    expect(person.changes.map(c => c.words)).toEqual([
      'Step 2 reworded: “Swing the blade guard fully open”',
      'New safety key point on step 3: “Cut-resistant gloves on both hands”',
    ])
    expect(person.focus).toEqual([v2.content.units[0]!.steps[1]!.id, newKeyPointId])
    // The same entry in the organisation-wide list the tablet keeps for offline refreshers.
    const all = await coach.client.get('/api/retraining')
    expect(all.status).toBe(200)
    expect(all.body.people.map((p: RetrainingEntry) => p.learnerId)).toEqual([learnerId])
    // Auditors read it too.
    const auditor = await addMember(server, admin.client, 'auditor')
    expect((await retraining(auditor.client)).people).toHaveLength(1)
  })

  it('scores a refresher on the changed elements only: the same marks without focus are not enough', async () => {
    const focus = (await retraining()).people[0]!.focus!
    const focused = focusContent(v2.content, focus)
    expect(focused.units[0]!.steps.map(s => s.text)).toEqual(['Swing the blade guard fully open', 'Fit the new blade set'])
    // Another learner, a lesson left open: marks of only the changed elements against the whole v2.
    const whole = await pushLesson(v2.id, focused, { learner: otherLearnerId, focus: null, decision: null, signedOff: false })
    expect(whole.score.readiness).toBe('another-pass')
    // The refresher: the same marks, with the focus.
    const refresher = await pushLesson(v2.id, focused, { focus })
    expect(refresher.score).toMatchObject({ t1: 100, t2: 100, t3: 100, t4: 100, order: 100, recall: 100, readiness: 'ready' })
    const review = await admin.client.get(`/api/lessons/${refresher.lessonId}`)
    expect(review.status).toBe(200)
    expect(review.body.score.recall).toBe(100)
    // The review reads the refresher's own content: the focused steps and key points only.
    expect(review.body.focus).toEqual(focus)
    expect(review.body.content).toEqual(focused)
  })

  it('clears the flag once the refresher on v2 is signed off ready', async () => {
    expect((await retraining()).people).toEqual([])
    expect((await coach.client.get('/api/retraining')).body.people).toEqual([])
  })

  it('answers 404 for another organisation\'s job and shows nothing across organisations', async () => {
    const other = await signUp(server)
    const otherJob = await publishedJob(other.client)
    const mine = await coach.client.get(`/api/jobs/${otherJob.jobId}/retraining`)
    expect(mine.status).toBe(404)
    expect(mine.body.data.message).toMatch(/not found in your organisation/)
    expect((await other.client.get(`/api/jobs/${job.jobId}/retraining`)).status).toBe(404)
    expect((await other.client.get('/api/retraining')).body.people).toEqual([])
    // Our organisation's state is as it was.
    const list = await retraining()
    expect(list.current).toEqual({ id: v2.id, number: 2 })
    expect(list.people).toEqual([])
  })

  it('asks for the whole job again when the new version only removes something', async () => {
    const draft = await admin.client.post(`/api/jobs/${job.jobId}/versions`)
    const read = await admin.client.get(`/api/versions/${draft.body.id}`)
    const content = structuredClone(read.body.content) as BreakdownContent
    content.units[0]!.steps.splice(0, 1)
    expect((await admin.client.patch(`/api/versions/${draft.body.id}`, { revision: read.body.revision, content })).status).toBe(200)
    const published = await admin.client.post(`/api/versions/${draft.body.id}/publish`, { changeNote: 'Lockout moved to its own job.' })
    expect(published.body.flaggedForRefresher).toBe(1)
    const [person] = (await retraining()).people
    expect(person).toMatchObject({ learnerId, trainedVersion: { id: v2.id, number: 2 }, currentVersion: { id: draft.body.id, number: 3 }, focus: null })
    expect(person!.changes.map(c => [c.words, c.taught])).toEqual([
      ['Step removed (was step 1): “Stop and lock out slicer”', false],
      ['Safety key point removed from step 1: “Own padlock on the isolator”', false],
    ])
  })

  it('answers 404 for an id that is not a uuid', async () => {
    expect((await coach.client.get('/api/jobs/not-a-job/retraining')).status).toBe(404)
  })
})
