// The people routes over HTTP: a learner's history (lessons with the server's recall scores,
// spot checks with outcomes, training state per job) and the roster's training at a glance.
// Roles: coaches, admins and auditors read anyone in their organisation; a learner reads only
// their own; another organisation's learner answers 404 and nothing of theirs changes.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { addMember, signUp } from '../support/accounts'
import { publishedJob, slicerContent } from '../support/breakdowns'
import { linkedLearner, spotCheck, teach, type Taught } from '../support/people'
import type { LearnerHistory, RosterTraining } from '../../shared/types/people'

let server: TestServer
let admin: Awaited<ReturnType<typeof signUp>>
let coach: Awaited<ReturnType<typeof addMember>>
let auditor: Awaited<ReturnType<typeof addMember>>
let ilse: Awaited<ReturnType<typeof linkedLearner>>
let tomas: Awaited<ReturnType<typeof linkedLearner>>
let slicer: Taught
let sealer: Taught
let firstLesson: string
let secondLesson: string
let failedCheck: string

beforeAll(async () => {
  server = await startServer()
  admin = await signUp(server, 'Hollowmere Bakery')
  coach = await addMember(server, admin.client, 'coach')
  auditor = await addMember(server, admin.client, 'auditor')
  ilse = await linkedLearner(server, admin.client, 'Ilse Brannagh')
  tomas = await linkedLearner(server, admin.client, 'Tomas Feld')
  const slicerJob = await publishedJob(admin.client)
  const sealerJob = await publishedJob(admin.client, slicerContent(), 'Thread film on the bag sealer')
  slicer = { learnerId: ilse.learnerId, ...slicerJob }
  sealer = { learnerId: ilse.learnerId, ...sealerJob }
  const safetyKp = slicer.content.units[0]!.steps[0]!.keyPoints[0]!.id
  const knackKp = slicer.content.units[0]!.steps[1]!.keyPoints[0]!.id
  // Slicer: another pass first (a cued key point), then ready. Sealer: ready, then a spot check missed its safety key point.
  firstLesson = (await teach(coach, slicer, { daysAgo: 20, decision: 'another-pass', cued: [knackKp, safetyKp] })).lessonId
  secondLesson = (await teach(coach, slicer, { daysAgo: 12 })).lessonId
  const sealerLesson = await teach(coach, sealer, { daysAgo: 10 })
  const sealerSafety = sealer.content.units[0]!.steps[0]!.keyPoints[0]!.id
  failedCheck = (await spotCheck(coach, sealer, { daysAgo: 3, lessonId: sealerLesson.lessonId, marks: { [sealerSafety]: 'missed' } })).checkId
  // Tomas has a lesson of his own on the slicer.
  await teach(coach, { ...slicer, learnerId: tomas.learnerId }, { daysAgo: 5 })
}, 180_000)
afterAll(() => server?.stop())

const historyOf = (learnerId: string) => `/api/learners/${learnerId}/history`

describe('GET /api/learners/[id]/history', () => {
  it('gives lessons with scores, checks with outcomes and the state per job', async () => {
    const res = await coach.client.get<LearnerHistory>(historyOf(ilse.learnerId))
    expect(res.status, res.text).toBe(200)
    const h = res.body
    expect(h.learner).toMatchObject({ id: ilse.learnerId, name: 'Ilse Brannagh', hasAccount: true, archivedAt: null })
    expect(h.learner).not.toHaveProperty('userId')
    // Oldest first, only Ilse's.
    expect(h.lessons.map(l => l.id)).toEqual([firstLesson, secondLesson, expect.any(String)])
    const [first, second, third] = h.lessons
    expect(first).toMatchObject({ jobTitle: 'Change the slicer blade set', versionNumber: 1, decision: 'another-pass', readiness: 'another-pass', refresher: false, coachName: 'Test coach' })
    // Two of three key points cued in T3: T3 = 100 × (0.5 + 0.5 + 1) / 3 = 66.7 (one decimal); recall =
    // mean(T2 100, T3 66.7, T4 100) = 88.9 (DESIGN.md §8, worked by hand).
    expect(first!.recall).toBe(88.9)
    expect(second).toMatchObject({ decision: 'ready', recall: 100, readiness: 'ready' })
    expect(third).toMatchObject({ jobTitle: 'Thread film on the bag sealer', decision: 'ready' })
    expect(h.checks).toHaveLength(1)
    expect(h.checks[0]).toMatchObject({ id: failedCheck, jobTitle: 'Thread film on the bag sealer', outcome: 'reteach', versionNumber: 1 })
    expect(typeof h.checks[0]!.finishedAt).toBe('number')

    const byJob = new Map(h.jobs.map(j => [j.jobTitle, j]))
    expect(byJob.get('Thread film on the bag sealer')).toMatchObject({ status: 'reteach', reteachBecause: 'failed-check', lastCheckId: failedCheck })
    // Ready twelve days ago with no check since: the first check (a day after sign-off) is overdue.
    expect(byJob.get('Change the slicer blade set')).toMatchObject({ status: 'check-due', overdueCheck: true, trainedVersionNumber: 1, lastLessonId: secondLesson })
    expect(byJob.get('Change the slicer blade set')!.nextCheckAt).toBeLessThan(Date.now())
  })

  it('is open to admins and auditors as to coaches', async () => {
    const byCoach = await coach.client.get(historyOf(ilse.learnerId))
    for (const client of [admin.client, auditor.client]) {
      const res = await client.get(historyOf(ilse.learnerId))
      expect(res.status, res.text).toBe(200)
      expect(res.body).toEqual(byCoach.body)
    }
  })

  it('lets a learner read their own history and no one else\'s', async () => {
    const own = await ilse.client.get<LearnerHistory>(historyOf(ilse.learnerId))
    expect(own.status, own.text).toBe(200)
    expect(own.body.lessons).toHaveLength(3)
    const other = await ilse.client.get(historyOf(tomas.learnerId))
    expect(other.status).toBe(403)
    expect(other.text).not.toContain('Tomas')
    const back = await tomas.client.get(historyOf(ilse.learnerId))
    expect(back.status).toBe(403)
    expect(back.text).not.toContain('Ilse')
  })

  it('answers 404 for an unknown or malformed id, and for another organisation\'s learner, changing nothing', async () => {
    const before = (await admin.client.get(historyOf(ilse.learnerId))).body
    const other = await signUp(server, 'Elsewhere Mill')
    const otherCoach = await addMember(server, other.client, 'coach')
    const otherAuditor = await addMember(server, other.client, 'auditor')
    for (const client of [other.client, otherCoach.client, otherAuditor.client]) {
      const res = await client.get(historyOf(ilse.learnerId))
      expect(res.status).toBe(404)
      expect(res.text).not.toContain('Ilse')
      expect(res.body.message).toMatch(/not found in your organisation/)
    }
    // A learner of the other organisation cannot reach it either.
    const outsider = await linkedLearner(server, other.client, 'Bruno Hale')
    expect((await outsider.client.get(historyOf(ilse.learnerId))).status).toBe(404)
    expect((await coach.client.get(historyOf(outsider.learnerId))).status).toBe(404)
    expect((await coach.client.get(historyOf('00000000-0000-4000-8000-000000000000'))).status).toBe(404)
    expect((await coach.client.get('/api/learners/not-a-uuid/history')).status).toBe(404)
    expect((await admin.client.get(historyOf(ilse.learnerId))).body).toEqual(before)
    // The other organisation's roster summary holds nothing of this one (its own learner has no training yet).
    expect((await other.client.get<RosterTraining[]>('/api/learners/training')).body).toEqual([])
  })

  it('answers 401 when signed out', async () => {
    const { Client } = await import('../support/http')
    expect((await new Client(server.url).get(historyOf(ilse.learnerId))).status).toBe(401)
  })
})

describe('GET /api/learners/training', () => {
  it('counts each learner\'s jobs by state', async () => {
    const res = await coach.client.get<RosterTraining[]>('/api/learners/training')
    expect(res.status, res.text).toBe(200)
    const byLearner = new Map(res.body.map(t => [t.learnerId, t]))
    expect(byLearner.get(ilse.learnerId)).toMatchObject({ ready: 1, checksDue: 1, overdueChecks: 1, reteach: 1, late: 0, inTraining: 0, planned: 0 })
    expect(byLearner.get(tomas.learnerId)).toMatchObject({ ready: 1, reteach: 0 })
    expect(byLearner.get(ilse.learnerId)!.nextCheckAt).toBeLessThan(Date.now())
  })

  it('is not for learners', async () => {
    expect((await ilse.client.get('/api/learners/training')).status).toBe(403)
  })
})
