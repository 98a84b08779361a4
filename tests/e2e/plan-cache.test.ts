// The plan's per-process cache (server/utils/organisation-cache.ts) never answers from stale data:
// two built servers on one SQLite file, as two app instances behind a load balancer. Before every
// write both servers have just answered GET /api/plan (so both hold the organisation's cells); the
// write goes to one of them, and the next GET on each must show it. One kind of write per test.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { TestServer } from '../support/server'
import type { Client } from '../support/http'
import { addMember, signInOn, signUp } from '../support/accounts'
import { startTwoServers, type TwoServers } from '../support/two-servers'
import { cleanTryout, publishedJob, rosterLearner } from '../support/breakdowns'
import type { PlanMatrix } from '../../shared/types/plan-matrix'

let servers: TwoServers
let a: TestServer
let b: TestServer
let admin: Awaited<ReturnType<typeof signUp>>
let coach: Awaited<ReturnType<typeof addMember>>
/** The admin signed in on each server: [on a, on b]. */
let readers: [Client, Client]
/** The coach signed in on server b (writes to b). */
let coachOnB: Client
let adminOnB: Client
let slicer: Awaited<ReturnType<typeof publishedJob>>
let areaId: string
let learnerId: string

/** GET /api/plan (every learner on one page) from both servers. */
async function plans(query = '?limit=500'): Promise<[PlanMatrix, PlanMatrix]> {
  const answers = await Promise.all(readers.map(r => r.get<PlanMatrix>(`/api/plan${query}`)))
  for (const res of answers) expect(res.status, res.text).toBe(200)
  return [answers[0]!.body, answers[1]!.body]
}

/** Both servers answer (and so hold the organisation's cells) before the write. */
async function primed() {
  return plans()
}

const cellOf = (m: PlanMatrix, learner: string, job: string) => m.cells.find(c => c.learnerId === learner && c.jobId === job)
const coverageOf = (m: PlanMatrix, job: string) => m.coverage.jobs.find(c => c.jobId === job)

beforeAll(async () => {
  servers = await startTwoServers('plan-cache')
  a = servers.a
  b = servers.b
  admin = await signUp(a, 'Crumb Cache Bakery')
  coach = await addMember(a, admin.client, 'coach')
  coachOnB = await signInOn(b, coach.email)
  adminOnB = await signInOn(b, admin.email)
  readers = [admin.client, adminOnB]
  areaId = (await admin.client.post('/api/work-areas', { name: 'Bake line' })).body.id
  slicer = await publishedJob(admin.client)
  expect((await admin.client.patch(`/api/jobs/${slicer.jobId}`, { workAreaId: areaId, coverageTarget: 2 })).status).toBe(200)
  learnerId = await rosterLearner(admin.client, 'Marit Loaves')
  expect((await admin.client.patch(`/api/learners/${learnerId}`, { workAreaId: areaId })).status).toBe(200)
}, 180_000)

afterAll(() => servers?.stop())

describe('the next GET /api/plan on either server shows', () => {
  it('a plan item put on the other server', async () => {
    for (const m of await primed()) expect(cellOf(m, learnerId, slicer.jobId)).toBeUndefined()
    const put = await coachOnB.request('PUT', `/api/plan/${learnerId}/${slicer.jobId}`, { targetDate: '2031-05-04', reason: 'new-job' })
    expect(put.status, put.text).toBe(200)
    for (const m of await plans()) expect(cellOf(m, learnerId, slicer.jobId)).toMatchObject({ status: 'planned', words: 'Planned by 4 May 2031' })
  })

  it('a signed-off lesson pushed through sync', async () => {
    for (const m of await primed()) expect(coverageOf(m, slicer.jobId)).toMatchObject({ readyNow: 0, needed: 2, gap: 2 })
    const deviceId = randomUUID()
    const lessonId = randomUUID()
    const signedOffAt = Date.now() - 60_000
    const lesson = { id: lessonId, coachUserId: coach.userId, learnerId, jobId: slicer.jobId, versionId: slicer.versionId, place: 'Oven 1', startedAt: signedOffAt - 600_000, updatedAt: signedOffAt, decision: 'ready', signedOffAt }
    const res = await coach.client.post('/api/sync', { deviceId, lessons: [lesson], events: cleanTryout(lessonId, deviceId, slicer.content, 1, signedOffAt - 500_000), checks: [] })
    expect(res.status, res.text).toBe(200)
    expect(res.body.rejected).toEqual([])
    for (const m of await plans()) {
      expect(cellOf(m, learnerId, slicer.jobId)).toMatchObject({ status: 'ready', trainedVersionNumber: 1 })
      expect(coverageOf(m, slicer.jobId)).toMatchObject({ readyNow: 1, needed: 2, gap: 1 })
    }
  })

  it('a new version published', async () => {
    for (const m of await primed()) expect(cellOf(m, learnerId, slicer.jobId)?.status).toBe('ready')
    const draft = await adminOnB.post(`/api/jobs/${slicer.jobId}/versions`)
    expect(draft.status, draft.text).toBe(201)
    expect((await adminOnB.post(`/api/versions/${draft.body.id}/publish`, { changeNote: 'New blade guard.' })).status).toBe(200)
    for (const m of await plans()) {
      expect(cellOf(m, learnerId, slicer.jobId)).toMatchObject({ status: 'reteach', reteachBecause: 'new-version', words: 'Re-teach: version 2 published' })
      expect(m.jobs.find(j => j.id === slicer.jobId)?.currentVersionNumber).toBe(2)
      expect(coverageOf(m, slicer.jobId)).toMatchObject({ readyNow: 0, gap: 2 })
    }
  })

  it('a coverage target changed, on a job with a published version and on one with only a draft (no change-feed row)', async () => {
    const draftOnly = (await admin.client.post('/api/jobs', { title: 'Glaze the buns', hazards: [] })).body.id as string
    for (const m of await primed()) {
      expect(coverageOf(m, slicer.jobId)?.needed).toBe(2)
      expect(m.jobs.find(j => j.id === draftOnly)).toMatchObject({ title: 'Glaze the buns', coverageTarget: 2, currentVersionNumber: null })
    }
    expect((await coachOnB.patch(`/api/jobs/${slicer.jobId}`, { coverageTarget: 5 })).status).toBe(200)
    for (const m of await plans()) expect(coverageOf(m, slicer.jobId)).toMatchObject({ needed: 5, gap: 5 })
    expect((await coachOnB.patch(`/api/jobs/${draftOnly}`, { coverageTarget: 3, title: 'Glaze the sticky buns' })).status).toBe(200)
    for (const m of await plans()) {
      expect(coverageOf(m, draftOnly)).toMatchObject({ needed: 3, gap: 3 })
      expect(m.jobs.find(j => j.id === draftOnly)?.title).toBe('Glaze the sticky buns')
    }
    expect((await coachOnB.delete(`/api/jobs/${draftOnly}`)).status).toBe(204)
    for (const m of await plans()) {
      expect(m.jobs.map(j => j.id)).not.toContain(draftOnly)
      expect(m.totals.jobs).toBe(1)
    }
  })

  it('a learner archived, and one who joined through an invitation (no change-feed row)', async () => {
    const leaving = await rosterLearner(admin.client, 'Tobin Crust')
    for (const m of await primed()) expect(m.learners.map(l => l.name)).toContain('Tobin Crust')
    expect((await coachOnB.patch(`/api/learners/${leaving}`, { archived: true })).status).toBe(200)
    const afterArchive = await plans()
    for (const m of afterArchive) expect(m.learners.map(l => l.id)).not.toContain(leaving)
    const before = afterArchive[0].totals.learners

    await primed()
    // Accepted on server b; the invitation's learner row is new to both servers' caches.
    const joined = await addMember(b, admin.client, 'learner')
    for (const m of await plans()) {
      expect(m.totals.learners).toBe(before + 1)
      expect(m.learners.map(l => l.name)).toContain('Test learner')
    }
    expect(joined.userId).toBeTruthy()
  })

  it('a work area renamed, then deleted', async () => {
    for (const m of await primed()) expect(m.coverage.workAreas.find(w => w.workAreaId === areaId)?.name).toBe('Bake line')
    expect((await adminOnB.patch(`/api/work-areas/${areaId}`, { name: 'Ovens and proving' })).status).toBe(200)
    for (const m of await plans()) {
      expect(m.coverage.workAreas.find(w => w.workAreaId === areaId)?.name).toBe('Ovens and proving')
      expect(m.learners.find(l => l.id === learnerId)?.workAreaName).toBe('Ovens and proving')
      expect(m.jobs.find(j => j.id === slicer.jobId)?.workAreaName).toBe('Ovens and proving')
    }
    expect((await adminOnB.delete(`/api/work-areas/${areaId}`)).status).toBe(204)
    for (const m of await plans()) {
      expect(m.learners.find(l => l.id === learnerId)).toMatchObject({ workAreaId: null, workAreaName: null })
      expect(m.jobs.find(j => j.id === slicer.jobId)).toMatchObject({ workAreaId: null, workAreaName: null })
      expect(m.coverage.workAreas.map(w => w.name)).toEqual(['No work area'])
    }
  })

  it('only its own organisation, each held apart', async () => {
    const other = await signUp(b, 'Second Cache Bakery')
    await rosterLearner(other.client, 'Wendel Rye')
    await primed()
    const theirs = (await other.client.get<PlanMatrix>('/api/plan')).body
    expect(theirs.learners.map(l => l.name)).toEqual(['Wendel Rye'])
    expect(theirs.jobs).toEqual([])
    for (const m of await plans()) expect(m.learners.map(l => l.name)).not.toContain('Wendel Rye')
  })
})
