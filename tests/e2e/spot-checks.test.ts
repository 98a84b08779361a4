// Spot checks over HTTP against the built server (issue 6 item 2): POST /api/sync takes checks and
// their marks (events naming checkId), computes outcome and next date; replays change nothing;
// GET /api/sync brings checks, plan items and due checks; a failed check turns the plan cell to
// re-teach; another organisation's ids are refused and its data stays as it was.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { addMember, signUp } from '../support/accounts'
import { cleanTryout, publishedJob, rosterLearner } from '../support/breakdowns'
import { sql } from '../support/db'
import { nextCheckDate, firstCheckDate } from '../../shared/utils/spot-check-schedule'

let server: TestServer
let coach: Awaited<ReturnType<typeof addMember>>
let admin: Awaited<ReturnType<typeof signUp>>
let job: Awaited<ReturnType<typeof publishedJob>>

beforeAll(async () => {
  server = await startServer()
  admin = await signUp(server)
  coach = await addMember(server, admin.client, 'coach')
  job = await publishedJob(admin.client)
}, 120_000)
afterAll(() => server?.stop())

const steps = () => job.content.units[0]!.steps
const safetyKp = () => steps()[0]!.keyPoints[0]!.id
const elements = () => [steps()[0]!.id, safetyKp(), `${safetyKp()}:reason`, steps()[2]!.id, steps()[2]!.keyPoints[0]!.id]

/** A learner taught and signed off as ready (so a first check is due), as one tablet pushes it. */
async function taughtLearner(name: string, signedOffAt: number) {
  const learnerId = await rosterLearner(coach.client, name)
  const deviceId = randomUUID()
  const lessonId = randomUUID()
  const res = await coach.client.post('/api/sync', { deviceId, lessons: [{ id: lessonId, coachUserId: coach.userId, learnerId, jobId: job.jobId, versionId: job.versionId, startedAt: signedOffAt - 60_000, updatedAt: signedOffAt, decision: 'ready', signedOffAt }], events: cleanTryout(lessonId, deviceId, job.content, 1, signedOffAt - 50_000), checks: [] })
  expect(res.body.rejected).toEqual([])
  return { learnerId, lessonId, deviceId }
}

function checkPush(deviceId: string, c: { id: string, learnerId: string, lessonId: string | null, finishedAt: number | null, intervalIndex?: number }, values: Record<string, string>) {
  const marks = Object.entries(values).map(([elementId, value], i) => ({ id: randomUUID(), checkId: c.id, elementId, kind: 'mark', value, clientTime: (c.finishedAt ?? 50_000) - 1000 + i, deviceId, seq: 1000 + i }))
  return {
    deviceId,
    lessons: [],
    checks: [{ id: c.id, coachUserId: coach.userId, learnerId: c.learnerId, jobId: job.jobId, versionId: job.versionId, lessonId: c.lessonId, startedAt: (c.finishedAt ?? 50_000) - 5000, updatedAt: c.finishedAt ?? 50_000, elements: elements(), note: 'At line 2', finishedAt: c.finishedAt, intervalIndex: c.intervalIndex ?? 0 }],
    events: marks,
  }
}

async function planCell(learnerId: string) {
  const res = await coach.client.get('/api/plan')
  expect(res.status).toBe(200)
  return res.body.cells.find((c: { learnerId: string, jobId: string }) => c.learnerId === learnerId && c.jobId === job.jobId)
}

const allUnaided = () => Object.fromEntries(elements().map(e => [e, 'unaided']))
const DAY = 86_400_000

describe('spot checks through sync', () => {
  it('shows a taught learner\'s first check as due, merges the check and computes clean; a replay changes nothing', async () => {
    const signedOffAt = Date.now() - 3 * DAY
    const { learnerId, lessonId, deviceId } = await taughtLearner('Ilse Brannagh-Okafor', signedOffAt)
    const pulled = await coach.client.get('/api/sync?since=0')
    const due = pulled.body.dueChecks.find((d: { learnerId: string }) => d.learnerId === learnerId)
    expect(due).toMatchObject({ key: `${learnerId}:${job.jobId}`, jobId: job.jobId, versionId: job.versionId, lessonId, intervalIndex: 0, dueAt: firstCheckDate(new Date(signedOffAt)).getTime() })

    const finishedAt = Date.now() - 1000
    const push = checkPush(deviceId, { id: randomUUID(), learnerId, lessonId, finishedAt, intervalIndex: 0 }, allUnaided())
    const first = await coach.client.post('/api/sync', push)
    expect(first.status).toBe(200)
    expect(first.body.rejected).toEqual([])
    expect(first.body.accepted).toHaveLength(1 + elements().length)
    // Clean at the first gap (1 day) moves to the second (2 days): DESIGN.md §8.
    expect(first.body.checks[push.checks[0]!.id]).toEqual({ outcome: 'clean', nextIntervalIndex: 1, nextDueAt: nextCheckDate(new Date(finishedAt), 1).getTime() })
    const before = (await sql(server.databaseUrl, 'select (select count(*) from spot_checks) c, (select count(*) from check_events) e, (select group_concat(outcome) from spot_checks) o')).rows[0]
    const again = await coach.client.post('/api/sync', push)
    expect(again.body.accepted.sort()).toEqual(first.body.accepted.sort())
    expect(again.body.checks).toEqual(first.body.checks)
    expect((await sql(server.databaseUrl, 'select (select count(*) from spot_checks) c, (select count(*) from check_events) e, (select group_concat(outcome) from spot_checks) o')).rows[0]).toEqual(before)

    // The pull brings the check with its outcome; the next check is now two days out.
    const after = await coach.client.get(`/api/sync?since=${pulled.body.cursor}`)
    expect(after.body.checks.map((c: { id: string }) => c.id)).toEqual([push.checks[0]!.id])
    expect(after.body.checks[0].result).toMatchObject({ outcome: 'clean', nextIntervalIndex: 1 })
    expect(after.body.dueChecks.find((d: { learnerId: string }) => d.learnerId === learnerId)).toMatchObject({ intervalIndex: 1, dueAt: nextCheckDate(new Date(finishedAt), 1).getTime() })
    expect((await planCell(learnerId)).status).toBe('ready')
  })

  it('keeps the gap on a cue (stay) and flags re-teach after a missed safety key point', async () => {
    const { learnerId, lessonId, deviceId } = await taughtLearner('Yusra Delacroix-Behn', Date.now() - 10 * DAY)
    const stay = checkPush(deviceId, { id: randomUUID(), learnerId, lessonId, finishedAt: Date.now() - 5 * DAY, intervalIndex: 2 }, { ...allUnaided(), [steps()[2]!.id]: 'cued' })
    const s = await coach.client.post('/api/sync', stay)
    expect(s.body.checks[stay.checks[0]!.id]).toMatchObject({ outcome: 'stay', nextIntervalIndex: 2 })
    const failed = checkPush(deviceId, { id: randomUUID(), learnerId, lessonId, finishedAt: Date.now() - 1000, intervalIndex: 2 }, { ...allUnaided(), [safetyKp()]: 'missed' })
    const f = await coach.client.post('/api/sync', failed)
    expect(f.body.checks[failed.checks[0]!.id]).toMatchObject({ outcome: 'reteach', nextIntervalIndex: 0 })
    // The derived training state (trainingRows, through the plan) now says re-teach because of the check.
    expect(await planCell(learnerId)).toMatchObject({ status: 'reteach', reteachBecause: 'failed-check' })
    // And no check is offered on the tablet until the job is re-taught.
    const pulled = await coach.client.get('/api/sync?since=0')
    expect(pulled.body.dueChecks.some((d: { learnerId: string }) => d.learnerId === learnerId)).toBe(false)
  })

  it('counts elements left unmarked as missed (two misses: re-teach)', async () => {
    const { learnerId, lessonId, deviceId } = await taughtLearner('Matthias Quennell', Date.now() - 2 * DAY)
    const some = Object.fromEntries(elements().slice(0, 3).map(e => [e, 'unaided']))
    const push = checkPush(deviceId, { id: randomUUID(), learnerId, lessonId, finishedAt: Date.now() - 1000 }, some)
    const res = await coach.client.post('/api/sync', push)
    expect(res.body.checks[push.checks[0]!.id].outcome).toBe('reteach')
  })

  it('brings plan items to the tablet', async () => {
    const learnerId = await rosterLearner(coach.client, 'Nadia Strathorne')
    const put = await coach.client.request('PUT', `/api/plan/${learnerId}/${job.jobId}`, { targetDate: '2030-01-15', reason: 'new-job', note: '' })
    expect(put.status).toBeLessThan(300)
    const pulled = await coach.client.get('/api/sync?since=0')
    expect(pulled.body.planItems.find((p: { learnerId: string }) => p.learnerId === learnerId)).toMatchObject({ jobId: job.jobId, targetDate: '2030-01-15', reason: 'new-job' })
  })

  it('lets only coaches and admins push checks', async () => {
    const learner = await addMember(server, admin.client, 'learner')
    const auditor = await addMember(server, admin.client, 'auditor')
    const push = checkPush(randomUUID(), { id: randomUUID(), learnerId: randomUUID(), lessonId: null, finishedAt: null }, {})
    expect((await learner.client.post('/api/sync', push)).status).toBe(403)
    expect((await auditor.client.post('/api/sync', push)).status).toBe(403)
  })
})

describe('spot checks across organisations', () => {
  it('refuses another organisation\'s learner, job, version, lesson and check ids, and leaves its data unchanged', async () => {
    const other = await signUp(server)
    const otherCoach = await addMember(server, other.client, 'coach')
    const otherJob = await publishedJob(other.client)
    const otherLearner = await rosterLearner(otherCoach.client, 'Cormac Ainsley-Tove')
    const otherDevice = randomUUID()
    const otherCheck = randomUUID()
    const theirs = await otherCoach.client.post('/api/sync', { deviceId: otherDevice, lessons: [], events: [], checks: [{ id: otherCheck, coachUserId: otherCoach.userId, learnerId: otherLearner, jobId: otherJob.jobId, versionId: otherJob.versionId, lessonId: null, startedAt: 1, updatedAt: 2, elements: [otherJob.content.units[0]!.steps[0]!.id], note: 'theirs', finishedAt: null, intervalIndex: 0 }] })
    expect(theirs.body.rejected).toEqual([])
    const snapshot = () => sql(server.databaseUrl, 'select id, note, finished_at, outcome, (select count(*) from check_events e where e.check_id = c.id) marks from spot_checks c where organisation_id = ?', [other.organisationId])
    const before = (await snapshot()).rows

    const ownLearner = await rosterLearner(coach.client, 'Saoirse Pemberton-Ruiz')
    const deviceId = randomUUID()
    const base = { coachUserId: coach.userId, learnerId: ownLearner, jobId: job.jobId, versionId: job.versionId, lessonId: null, startedAt: 1, updatedAt: 5, elements: [steps()[0]!.id], note: 'mine', finishedAt: 5, intervalIndex: 0 }
    const res = await coach.client.post('/api/sync', {
      deviceId,
      lessons: [],
      checks: [
        { ...base, id: randomUUID(), learnerId: otherLearner },
        { ...base, id: randomUUID(), jobId: otherJob.jobId, versionId: otherJob.versionId },
        { ...base, id: randomUUID(), versionId: otherJob.versionId },
        { ...base, id: randomUUID(), coachUserId: otherCoach.userId },
        { ...base, id: otherCheck },
      ],
      events: [{ id: randomUUID(), checkId: otherCheck, elementId: otherJob.content.units[0]!.steps[0]!.id, kind: 'mark', value: 'missed', clientTime: 3, deviceId, seq: 1 }],
    })
    expect(res.status).toBe(200)
    expect(res.body.accepted).toEqual([])
    expect(res.body.rejected.map((r: { reason: string }) => r.reason)).toEqual([
      'The learner is not in this organisation\'s roster.',
      'The job is not one of this organisation\'s jobs.',
      'The breakdown version does not belong to this job.',
      'The coach is not a coach or admin of this organisation.',
      'This spot check id is already used elsewhere; start the check again on the tablet.',
      'The spot check of this mark is not on the server yet; send the check with it.',
    ])
    expect((await snapshot()).rows).toEqual(before)
    // Neither pull shows the other's check.
    const mine = await coach.client.get('/api/sync?since=0')
    expect(mine.body.checks.some((c: { id: string }) => c.id === otherCheck)).toBe(false)
  })
})
