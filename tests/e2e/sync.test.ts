// POST /api/sync and GET /api/sync over HTTP against the built server.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { startServer, type TestServer } from '../support/server'
import { addMember, signUp } from '../support/accounts'
import { cleanTryout, publishedJob, rosterLearner } from '../support/breakdowns'
import { sql } from '../support/db'

let server: TestServer
let coach: Awaited<ReturnType<typeof addMember>>
let admin: Awaited<ReturnType<typeof signUp>>
let job: Awaited<ReturnType<typeof publishedJob>>
let learnerId: string

beforeAll(async () => {
  server = await startServer()
  admin = await signUp(server)
  coach = await addMember(server, admin.client, 'coach')
  job = await publishedJob(admin.client)
  learnerId = await rosterLearner(coach.client)
}, 120_000)
afterAll(() => server?.stop())

function lesson(id: string, updatedAt: number, extra: Record<string, unknown> = {}) {
  return { id, coachUserId: coach.userId, learnerId, jobId: job.jobId, versionId: job.versionId, place: 'Slicer 2', startedAt: 1000, updatedAt, ...extra }
}

async function counts() {
  const r = await sql(server.databaseUrl, 'select (select count(*) from lessons) l, (select count(*) from lesson_events) e, (select count(*) from lesson_scores) s')
  return r.rows[0]
}

describe('sync', () => {
  it('takes a lesson and its marks, scores it, and answers the same to the same push', async () => {
    const deviceId = randomUUID()
    const lessonId = randomUUID()
    const events = cleanTryout(lessonId, deviceId, job.content)
    const push = { deviceId, lessons: [lesson(lessonId, 20_000, { decision: 'ready', signedOffAt: 20_000 })], events, checks: [] }
    const first = await coach.client.post('/api/sync', push)
    expect(first.status).toBe(200)
    expect(first.body.rejected).toEqual([])
    expect(first.body.accepted).toHaveLength(1 + events.length)
    expect(first.body.scores[lessonId]).toMatchObject({ t1: 100, t2: 100, t3: 100, t4: 100, order: 100, recall: 100, readiness: 'ready' })
    expect(first.body.cursor).toBeGreaterThan(0)
    const before = await counts()
    const again = await coach.client.post('/api/sync', push)
    expect(again.body.accepted.sort()).toEqual(first.body.accepted.sort())
    expect(await counts()).toEqual(before)

    const review = await admin.client.get(`/api/lessons/${lessonId}`)
    expect(review.status).toBe(200)
    expect(review.body.score.recall).toBe(100)
    expect(review.body.events).toHaveLength(events.length)
    const scores = await admin.client.get(`/api/learners/${learnerId}/scores`)
    expect(scores.body.find((s: { lessonId: string }) => s.lessonId === lessonId).recall).toBe(100)
  })

  it('pulls everything with since=0 and then only what changed', async () => {
    const all = await coach.client.get('/api/sync?since=0')
    expect(all.status).toBe(200)
    expect(all.body.versions.map((v: { id: string }) => v.id)).toContain(job.versionId)
    expect(all.body.versions[0].job.title).toBe('Change the slicer blade set')
    expect(all.body.learners.map((l: { id: string }) => l.id)).toContain(learnerId)
    const cursor = all.body.cursor
    const quiet = await coach.client.get(`/api/sync?since=${cursor}`)
    expect(quiet.body).toMatchObject({ cursor, versions: [], learners: [], lessons: [] })

    const renamed = await coach.client.patch(`/api/learners/${learnerId}`, { reference: 'HB-0142' })
    expect(renamed.status).toBe(200)
    const deviceId = randomUUID()
    const lessonId = randomUUID()
    await coach.client.post('/api/sync', { deviceId, lessons: [lesson(lessonId, 30_000)], events: [], checks: [] })
    const changed = await coach.client.get(`/api/sync?since=${cursor}`)
    expect(changed.body.learners.map((l: { reference: string }) => l.reference)).toEqual(['HB-0142'])
    expect(changed.body.lessons.map((l: { id: string }) => l.id)).toEqual([lessonId])
    expect(changed.body.cursor).toBeGreaterThan(cursor)
  })

  it('answers 413 to a push over the byte limit and 422 to a malformed envelope', async () => {
    const huge = await coach.client.post('/api/sync', JSON.stringify({ deviceId: randomUUID(), lessons: [], events: [{ pad: 'x'.repeat(9 * 1024 * 1024) }], checks: [] }))
    expect(huge.status).toBe(413)
    const tooMany = await coach.client.post('/api/sync', { deviceId: randomUUID(), events: Array.from({ length: 20_001 }, () => 0) })
    expect(tooMany.status).toBe(422)
    expect(tooMany.body.data.fieldErrors.events[0]).toMatch(/at most 20000 events/)
    const noDevice = await coach.client.post('/api/sync', { lessons: [] })
    expect(noDevice.status).toBe(422)
  })

  it('lets only coaches and admins push', async () => {
    const auditor = await addMember(server, admin.client, 'auditor')
    expect((await auditor.client.post('/api/sync', { deviceId: randomUUID(), lessons: [], events: [], checks: [] })).status).toBe(403)
  })

  it('rejects another organisation\'s ids and leaves both organisations as they were', async () => {
    const other = await signUp(server)
    const otherJob = await publishedJob(other.client)
    const otherLearner = await rosterLearner(other.client)
    const before = await counts()
    const res = await coach.client.post('/api/sync', { deviceId: randomUUID(), lessons: [lesson(randomUUID(), 1, { learnerId: otherLearner }), lesson(randomUUID(), 1, { jobId: otherJob.jobId, versionId: otherJob.versionId })], events: [], checks: [] })
    expect(res.body.accepted).toEqual([])
    expect(res.body.rejected.map((r: { reason: string }) => r.reason)).toEqual([
      'The learner is not in this organisation\'s roster.',
      'The job is not one of this organisation\'s jobs.',
    ])
    expect(await counts()).toEqual(before)
  })

  // ≥ 1,000 malformed or hostile payloads: wrong types, huge strings, unknown ids, other
  // organisations' ids, duplicate ids with other content. None may cause a 5xx; none may change a row.
  it('never answers 5xx to 1,000 hostile pushes, and rejected items change nothing', async () => {
    const deviceId = randomUUID()
    const lessonId = randomUUID()
    const seeded = cleanTryout(lessonId, deviceId, job.content)
    await coach.client.post('/api/sync', { deviceId, lessons: [lesson(lessonId, 5_000)], events: seeded, checks: [] })
    const other = await signUp(server)
    const otherJob = await publishedJob(other.client)
    const before = await sql(server.databaseUrl, 'select (select count(*) from lessons) l, (select count(*) from lesson_events) e, (select group_concat(value) from (select value from lesson_events order by id)) v, (select group_concat(helper) from lessons) h')

    const junk = fc.oneof(fc.anything(), fc.string({ maxLength: 3000 }), fc.constant(null), fc.integer(), fc.constant({ id: 'not-a-uuid' }))
    const hostileEvent = fc.oneof(
      junk,
      fc.record({ id: fc.constantFrom(...seeded.map(e => e.id)), value: fc.constantFrom('missed', 'cued') }).map(({ id, value }) => ({ ...seeded.find(e => e.id === id)!, value })),
      fc.record({ lessonId: fc.uuid(), pass: fc.constantFrom('T1-1', 'T9-9', '', 'x'.repeat(500)) }).map(x => ({ ...seeded[0]!, id: randomUUID(), ...x })),
      fc.constant({ ...seeded[0]!, id: randomUUID(), deviceId: randomUUID() }),
      fc.constant({ ...seeded[0]!, id: randomUUID(), kind: 'delete' }),
      fc.constant({ ...seeded[0]!, id: randomUUID(), value: 'x'.repeat(100_000) }),
    )
    const hostileLesson = fc.oneof(
      junk,
      fc.constant(lesson(randomUUID(), 1, { jobId: otherJob.jobId, versionId: otherJob.versionId })),
      fc.constant(lesson(lessonId, 1, { learnerId: randomUUID() })),
      fc.constant(lesson(lessonId, 99_999, { versionId: otherJob.versionId })),
      fc.constant(lesson(randomUUID(), 1, { coachUserId: other.userId })),
      fc.constant(lesson(randomUUID(), 1, { helper: 'x'.repeat(5000) })),
    )
    const envelope = fc.oneof(
      fc.record({ deviceId: fc.constant(deviceId), lessons: fc.array(hostileLesson, { maxLength: 3 }), events: fc.array(hostileEvent, { maxLength: 5 }), checks: fc.array(junk, { maxLength: 2 }) }),
      fc.record({ deviceId: junk, lessons: junk, events: junk }),
      junk,
    )
    let fiveHundreds = 0
    await fc.assert(fc.asyncProperty(envelope, async (body) => {
      const res = await coach.client.request('POST', '/api/sync', JSON.stringify(body) ?? 'null')
      if (res.status >= 500) fiveHundreds++
      return res.status < 500 && (res.status !== 200 || res.body.accepted.every((id: string) => id === lessonId || seeded.some(e => e.id === id)))
    }), { numRuns: 1000 })
    expect(fiveHundreds).toBe(0)
    const after = await sql(server.databaseUrl, 'select (select count(*) from lessons) l, (select count(*) from lesson_events) e, (select group_concat(value) from (select value from lesson_events order by id)) v, (select group_concat(helper) from lessons) h')
    expect(after.rows[0]).toEqual(before.rows[0])
  }, 300_000)
})

describe('sync pull after breakdown changes', () => {
  it('brings a newly published version and takes the retired one and archived jobs away', async () => {
    const start = (await coach.client.get('/api/sync?since=0')).body.cursor
    const draft = await admin.client.post(`/api/jobs/${job.jobId}/versions`)
    const content = structuredClone(draft.body.content)
    content.units[0].steps[1].text = 'Swing the blade guard open'
    await admin.client.patch(`/api/versions/${draft.body.id}`, { revision: draft.body.revision, content })
    await admin.client.post(`/api/versions/${draft.body.id}/publish`, { changeNote: 'Reworded step 2.' })
    const pulled = (await coach.client.get(`/api/sync?since=${start}`)).body
    expect(pulled.versions.map((v: { id: string }) => v.id)).toEqual([draft.body.id])
    expect(pulled.removedVersions).toEqual([job.versionId])

    const other = await publishedJob(admin.client, undefined, 'Check-weigh a tray')
    const mid = (await coach.client.get('/api/sync?since=0')).body.cursor
    await admin.client.patch(`/api/jobs/${other.jobId}`, { title: 'Check-weigh a tray of rolls' })
    expect((await coach.client.get(`/api/sync?since=${mid}`)).body.versions.map((v: { job: { title: string } }) => v.job.title)).toEqual(['Check-weigh a tray of rolls'])
    await admin.client.delete(`/api/jobs/${other.jobId}`)
    const gone = (await coach.client.get(`/api/sync?since=${mid}`)).body
    expect(gone.removedVersions).toContain(other.versionId)
  })
})
