// The plan over HTTP against the built server: plan items, derived cell statuses from real lessons
// pushed through POST /api/sync, filters, the CSV export, bad input, other organisations, auditors.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { addMember, signUp } from '../support/accounts'
import { cleanTryout, publishedJob, rosterLearner, slicerContent } from '../support/breakdowns'
import { sql } from '../support/db'
import { parseCsv } from '../support/csv'
import type { Client } from '../support/http'
import type { PlanCell, PlanMatrix } from '../../shared/types/plan-matrix'
import { localDay } from '../../shared/utils/training-status'

let server: TestServer
let admin: Awaited<ReturnType<typeof signUp>>
let coach: Awaited<ReturnType<typeof addMember>>
let auditor: Awaited<ReturnType<typeof addMember>>
let slicer: Awaited<ReturnType<typeof publishedJob>>
let sealer: Awaited<ReturnType<typeof publishedJob>>
let areaId: string

const DAY = 86_400_000
const put = (client: Client, learnerId: string, jobId: string, body: unknown) => client.request('PUT', `/api/plan/${learnerId}/${jobId}`, body)
const cellOf = (m: PlanMatrix, learnerId: string, jobId: string) => m.cells.find(c => c.learnerId === learnerId && c.jobId === jobId)

beforeAll(async () => {
  server = await startServer()
  admin = await signUp(server)
  coach = await addMember(server, admin.client, 'coach')
  auditor = await addMember(server, admin.client, 'auditor')
  const area = await admin.client.post('/api/work-areas', { name: 'Slicing and bagging' })
  areaId = area.body.id
  slicer = await publishedJob(admin.client)
  sealer = await publishedJob(admin.client, slicerContent(), 'Thread film on the bag sealer')
  await admin.client.patch(`/api/jobs/${sealer.jobId}`, { workAreaId: areaId, coverageTarget: 1 })
}, 120_000)
afterAll(() => server?.stop())

/** A lesson of `learnerId` on the slicer, pushed from a tablet like the runner would. */
async function pushLesson(learnerId: string, job: typeof slicer, extra: { signedOffAt: number | null, decision: 'ready' | 'another-pass' | null, versionId?: string }) {
  const deviceId = randomUUID()
  const lessonId = randomUUID()
  const startedAt = (extra.signedOffAt ?? Date.now()) - 3_600_000
  const lesson = { id: lessonId, coachUserId: coach.userId, learnerId, jobId: job.jobId, versionId: extra.versionId ?? job.versionId, place: 'Line 2', startedAt, updatedAt: startedAt + 1000, decision: extra.decision, signedOffAt: extra.signedOffAt }
  const res = await coach.client.post('/api/sync', { deviceId, lessons: [lesson], events: cleanTryout(lessonId, deviceId, job.content, 1, startedAt), checks: [] })
  expect(res.status, res.text).toBe(200)
  expect(res.body.rejected).toEqual([])
  return lessonId
}

describe('plan items', () => {
  it('creates, changes and removes a need, with an audit entry and a change-feed row each time', async () => {
    const learnerId = await rosterLearner(coach.client, 'Wren Calloway')
    const created = await put(coach.client, learnerId, slicer.jobId, { targetDate: '2030-03-14', reason: 'turnover', note: 'Covers the early shift' })
    expect(created.status, created.text).toBe(200)
    expect(created.body).toMatchObject({ status: 'planned', words: 'Planned by 14 Mar 2030', targetDate: '2030-03-14', reason: 'turnover', note: 'Covers the early shift' })
    const itemId = created.body.planItemId as string

    const changed = await put(coach.client, learnerId, slicer.jobId, { targetDate: null, reason: 'absence-cover' })
    expect(changed.body).toMatchObject({ status: 'planned', words: 'Planned, no date set', planItemId: itemId, reason: 'absence-cover', note: '' })
    const matrix = (await coach.client.get<PlanMatrix>('/api/plan')).body
    expect(cellOf(matrix, learnerId, slicer.jobId)).toMatchObject({ status: 'planned', reason: 'absence-cover' })
    expect(matrix.learners.map(l => l.name)).toContain('Wren Calloway')
    expect(matrix.jobs.map(j => j.title)).toEqual(['Thread film on the bag sealer', 'Change the slicer blade set'])

    const removed = await coach.client.delete(`/api/plan/${learnerId}/${slicer.jobId}`)
    expect(removed.status).toBe(200)
    expect(removed.body).toMatchObject({ status: 'not-needed', planItemId: null })
    expect(cellOf((await coach.client.get<PlanMatrix>('/api/plan')).body, learnerId, slicer.jobId)).toBeUndefined()
    // Removing again changes nothing and says the same.
    expect((await coach.client.delete(`/api/plan/${learnerId}/${slicer.jobId}`)).body.status).toBe('not-needed')

    const audit = (await admin.client.get<Array<{ action: string, targetId: string }>>('/api/audit')).body.filter(a => a.targetId === itemId).map(a => a.action)
    expect(audit.sort()).toEqual(['plan.created', 'plan.removed', 'plan.updated'])
    const feed = await sql(server.databaseUrl, 'select count(*) as n from change_feed where entity = ? and entity_id = ?', ['plan', itemId])
    expect(Number(feed.rows[0]!.n)).toBe(3)
    expect((await sql(server.databaseUrl, 'select count(*) as n from plan_items where id = ?', [itemId])).rows[0]!.n).toBe(0)
  })
})

describe('cell status from real lessons', () => {
  it('reads planned → in training → ready → re-teach on a new version, with coverage and late items', async () => {
    const ready = await rosterLearner(coach.client, 'Odile Farrant')
    const due = await rosterLearner(coach.client, 'Tamsin Oakes')
    const training = await rosterLearner(coach.client, 'Bram Hollis')
    const late = await rosterLearner(coach.client, 'Ciaran Vell')

    await put(coach.client, ready, slicer.jobId, { targetDate: '2030-01-01', reason: 'new-job' })
    await put(coach.client, training, slicer.jobId, { targetDate: '2030-01-01', reason: 'new-job' })
    const yesterday = localDay(Date.now() - DAY)
    await put(coach.client, late, slicer.jobId, { targetDate: yesterday, reason: 'quality-or-safety', note: 'Torn loaves on line 2' })

    await pushLesson(ready, slicer, { signedOffAt: Date.now() - 60_000, decision: 'ready' })
    await pushLesson(due, slicer, { signedOffAt: Date.now() - 3 * DAY, decision: 'ready' })
    await pushLesson(training, slicer, { signedOffAt: null, decision: null })

    let m = (await coach.client.get<PlanMatrix>('/api/plan')).body
    expect(cellOf(m, ready, slicer.jobId)).toMatchObject({ status: 'ready', trainedVersionNumber: 1, late: false })
    expect(cellOf(m, ready, slicer.jobId)!.words).toMatch(/^Ready since /)
    // Signed off three days ago: the first check (one day after) is overdue.
    expect(cellOf(m, due, slicer.jobId)).toMatchObject({ status: 'check-due', overdueCheck: true })
    expect(cellOf(m, training, slicer.jobId)).toMatchObject({ status: 'in-training', words: 'In training, planned by 1 Jan 2030' })
    expect(cellOf(m, late, slicer.jobId)).toMatchObject({ status: 'late', late: true })
    expect(m.coverage.jobs.find(j => j.jobId === slicer.jobId)).toMatchObject({ readyNow: 2, needed: 2, gap: 0 })
    expect(m.coverage.jobs.find(j => j.jobId === sealer.jobId)).toMatchObject({ readyNow: 0, needed: 1, gap: 1 })
    expect(m.coverage.workAreas).toEqual(expect.arrayContaining([expect.objectContaining({ workAreaId: areaId, name: 'Slicing and bagging', jobsWithGap: 1, gap: 1 })]))

    // A new version of the slicer breakdown: both ready people are flagged, and coverage drops.
    const draft = await admin.client.post(`/api/jobs/${slicer.jobId}/versions`)
    expect((await admin.client.post(`/api/versions/${draft.body.id}/publish`, { changeNote: 'Blade guard latch changed.' })).status).toBe(200)
    m = (await coach.client.get<PlanMatrix>('/api/plan')).body
    expect(cellOf(m, ready, slicer.jobId)).toMatchObject({ status: 'reteach', reteachBecause: 'new-version', words: 'Re-teach: version 2 published' })
    expect(cellOf(m, due, slicer.jobId)).toMatchObject({ status: 'reteach' })
    expect(m.jobs.find(j => j.id === slicer.jobId)!.currentVersionNumber).toBe(2)
    expect(m.coverage.jobs.find(j => j.jobId === slicer.jobId)).toMatchObject({ readyNow: 0, gap: 2 })

    // A refresher on version 2 brings one of them back.
    const v2 = { ...slicer, versionId: draft.body.id as string }
    const focus = [slicer.content.units[0]!.steps[1]!.id]
    const lessonId = randomUUID()
    const deviceId = randomUUID()
    const at = Date.now() - 60_000
    const res = await coach.client.post('/api/sync', {
      deviceId,
      lessons: [{ id: lessonId, coachUserId: coach.userId, learnerId: ready, jobId: slicer.jobId, versionId: v2.versionId, startedAt: at - 600_000, updatedAt: at, decision: 'ready', signedOffAt: at, focus }],
      events: cleanTryout(lessonId, deviceId, slicer.content, 1, at - 500_000),
      checks: [],
    })
    expect(res.status, res.text).toBe(200)
    m = (await coach.client.get<PlanMatrix>('/api/plan')).body
    expect(cellOf(m, ready, slicer.jobId)).toMatchObject({ status: 'ready', trainedVersionNumber: 2 })
  })
})

describe('filters', () => {
  let areaLearner: string
  let other: string
  beforeAll(async () => {
    areaLearner = await rosterLearner(coach.client, 'Pell Ambrose')
    await coach.client.patch(`/api/learners/${areaLearner}`, { workAreaId: areaId })
    other = await rosterLearner(coach.client, 'Juno Castellane')
    await put(coach.client, areaLearner, sealer.jobId, { targetDate: localDay(Date.now() - 2 * DAY), reason: 'turnover' })
    await put(coach.client, other, slicer.jobId, { targetDate: '2031-05-01', reason: 'other' })
  })

  it('filters by work area, job, status and name on the server, while coverage still counts everyone', async () => {
    const byArea = (await coach.client.get<PlanMatrix>(`/api/plan?workAreaId=${areaId}`)).body
    expect(byArea.jobs.map(j => j.id)).toEqual([sealer.jobId])
    expect(byArea.learners.map(l => l.name)).toEqual(['Pell Ambrose'])
    const noArea = (await coach.client.get<PlanMatrix>('/api/plan?workAreaId=none')).body
    expect(noArea.jobs.map(j => j.id)).toEqual([slicer.jobId])
    expect(noArea.learners.map(l => l.name)).not.toContain('Pell Ambrose')

    const byJob = (await coach.client.get<PlanMatrix>(`/api/plan?jobId=${slicer.jobId}`)).body
    expect(byJob.jobs.map(j => j.id)).toEqual([slicer.jobId])
    expect(byJob.cells.every(c => c.jobId === slicer.jobId)).toBe(true)

    const lateOnly = (await coach.client.get<PlanMatrix>('/api/plan?status=late')).body
    expect(lateOnly.learners.map(l => l.name).sort()).toEqual(['Ciaran Vell', 'Pell Ambrose'])
    expect(lateOnly.totals.learners).toBeGreaterThan(lateOnly.learners.length)

    const search = (await coach.client.get<PlanMatrix>('/api/plan?q=castel')).body
    expect(search.learners.map(l => l.name)).toEqual(['Juno Castellane'])
    expect(search.cells.map((c: PlanCell) => c.learnerId)).toEqual([other])
    const everyone = (await coach.client.get<PlanMatrix>('/api/plan')).body
    expect(search.coverage).toEqual(everyone.coverage)
  })

  it('pages the learners; cells follow the page and coverage does not', async () => {
    const all = (await coach.client.get<PlanMatrix>('/api/plan?limit=500')).body
    expect(all.learners.length).toBeGreaterThan(4)
    const first = (await coach.client.get<PlanMatrix>('/api/plan?limit=2')).body
    const second = (await coach.client.get<PlanMatrix>('/api/plan?limit=2&offset=2')).body
    expect(first.learners.map(l => l.id)).toEqual(all.learners.slice(0, 2).map(l => l.id))
    expect(second.learners.map(l => l.id)).toEqual(all.learners.slice(2, 4).map(l => l.id))
    expect(first.page).toEqual({ offset: 0, limit: 2, matching: all.learners.length })
    expect(first.cells.every(c => first.learners.some(l => l.id === c.learnerId))).toBe(true)
    expect(first.cells.length).toBe(all.cells.filter(c => first.learners.some(l => l.id === c.learnerId)).length)
    expect(first.coverage).toEqual(all.coverage)
    expect((await coach.client.get<PlanMatrix>('/api/plan')).body.page.limit).toBe(50)
    expect((await coach.client.get('/api/plan?limit=0')).status).toBe(422)
    expect((await coach.client.get('/api/plan?limit=501')).status).toBe(422)
    expect((await coach.client.get('/api/plan?offset=-1')).status).toBe(422)
  })

  it('answers 422 to a filter it does not know', async () => {
    const res = await coach.client.get('/api/plan?status=finished')
    expect(res.status).toBe(422)
    expect(res.body.data.fieldErrors.status).toBeTruthy()
    expect((await coach.client.get('/api/plan?workAreaId=bakehouse')).status).toBe(422)
    expect((await coach.client.get('/api/plan?jobId=42')).status).toBe(422)
  })
})

describe('CSV export', () => {
  it('downloads the matrix with named columns, and neutralises a cell that starts a formula (OWASP "CSV Injection")', async () => {
    const sneaky = await rosterLearner(coach.client, '=HYPERLINK("http://x.example","Click")')
    await put(coach.client, sneaky, slicer.jobId, { targetDate: '2030-06-30', reason: 'other', note: '@SUM(1+1)' })
    const res = await auditor.client.get('/api/plan.csv')
    expect(res.status).toBe(200)
    expect(res.headers.get('content-type')).toMatch(/^text\/csv/)
    expect(res.headers.get('content-disposition')).toMatch(/^attachment; filename="fourfold-plan-\d{4}-\d{2}-\d{2}\.csv"$/)
    const rows = parseCsv(res.text)
    expect(rows[0]).toEqual(['Learner', 'Reference', 'Learner work area', 'Job', 'Job work area', 'Status', 'In words', 'Target date', 'Reason', 'Note', 'Trained on version', 'Current version', 'Ready since', 'Next spot check'])
    const line = rows.find(r => r[0]!.includes('HYPERLINK'))!
    expect(line[0]).toBe('\'=HYPERLINK("http://x.example","Click")')
    expect(line[9]).toBe('\'@SUM(1+1)')
    expect(line.slice(3, 9)).toEqual(['Change the slicer blade set', '', 'Planned', 'Planned by 30 Jun 2030', '2030-06-30', 'Other'])
    const odile = rows.find(r => r[0] === 'Odile Farrant')!
    expect(odile.slice(5, 6)).toEqual(['Ready'])
    expect(odile[10]).toBe('2')

    // The export is every matching row, not a page.
    const all = (await coach.client.get<PlanMatrix>('/api/plan?limit=500')).body
    expect(rows.length - 1).toBe(all.cells.length)
    expect(parseCsv((await coach.client.get('/api/plan.csv?limit=1')).text).length).toBe(rows.length)

    const filtered = parseCsv((await coach.client.get(`/api/plan.csv?jobId=${sealer.jobId}`)).text)
    expect(filtered.slice(1).every(r => r[3] === 'Thread film on the bag sealer')).toBe(true)
    expect(filtered.length).toBeGreaterThan(1)
  })
})

describe('bad input', () => {
  let learnerId: string
  beforeAll(async () => {
    learnerId = await rosterLearner(coach.client, 'Nessa Quill')
  })

  it('400 for a body that is not JSON, 422 with the field for a bad date, reason or note, 404 for a malformed id', async () => {
    expect((await put(coach.client, learnerId, slicer.jobId, '{"targetDate":')).status).toBe(400)
    const badDate = await put(coach.client, learnerId, slicer.jobId, { targetDate: '2026-02-30', reason: 'turnover' })
    expect(badDate.status).toBe(422)
    expect(badDate.body.data.fieldErrors.targetDate).toBeTruthy()
    expect((await put(coach.client, learnerId, slicer.jobId, { targetDate: '14/03/2030', reason: 'turnover' })).status).toBe(422)
    const badReason = await put(coach.client, learnerId, slicer.jobId, { targetDate: null, reason: 'because' })
    expect(badReason.status).toBe(422)
    expect(badReason.body.data.fieldErrors.reason).toBeTruthy()
    expect((await put(coach.client, learnerId, slicer.jobId, { reason: 'other', note: 'x'.repeat(501) })).status).toBe(422)
    expect((await put(coach.client, 'not-a-uuid', slicer.jobId, { reason: 'other' })).status).toBe(404)
    expect((await put(coach.client, randomUUID(), slicer.jobId, { reason: 'other' })).status).toBe(404)
    expect((await sql(server.databaseUrl, 'select count(*) as n from plan_items where learner_id = ?', [learnerId])).rows[0]!.n).toBe(0)
  })

  it('409 for an archived learner', async () => {
    await coach.client.patch(`/api/learners/${learnerId}`, { archived: true })
    const res = await put(coach.client, learnerId, slicer.jobId, { reason: 'other' })
    expect(res.status).toBe(409)
    expect(res.body.data.message).toMatch(/archived/)
  })
})

describe('other organisations and auditors', () => {
  it('answers 404 for another organisation\'s learner or job and leaves its plan unchanged', async () => {
    const otherOrg = await signUp(server)
    const theirJob = await publishedJob(otherOrg.client)
    const theirLearner = await rosterLearner(otherOrg.client, 'Sable Merrow')
    await put(otherOrg.client, theirLearner, theirJob.jobId, { targetDate: '2030-09-09', reason: 'new-job', note: 'theirs' })
    const before = (await otherOrg.client.get<PlanMatrix>('/api/plan')).body.cells
    const mine = await rosterLearner(coach.client, 'Lark Penhallow')

    for (const [l, j] of [[theirLearner, theirJob.jobId], [theirLearner, slicer.jobId], [mine, theirJob.jobId]] as const) {
      const res = await put(coach.client, l, j, { targetDate: '2030-01-01', reason: 'other', note: 'mine' })
      expect(res.status).toBe(404)
      expect(res.body.data.message).toMatch(/not found in your organisation/)
      expect((await coach.client.delete(`/api/plan/${l}/${j}`)).status).toBe(404)
    }
    expect((await otherOrg.client.get<PlanMatrix>('/api/plan')).body.cells).toEqual(before)
    expect(before).toHaveLength(1)
    const mineNow = (await coach.client.get<PlanMatrix>('/api/plan')).body
    expect(mineNow.learners.map(l => l.name)).not.toContain('Sable Merrow')
    expect(mineNow.jobs.map(j => j.id)).not.toContain(theirJob.jobId)
  })

  it('lets an auditor read the plan and its export, and change nothing', async () => {
    const learnerId = await rosterLearner(coach.client, 'Quinn Ashdown')
    await put(coach.client, learnerId, slicer.jobId, { targetDate: '2030-02-02', reason: 'other' })
    const read = await auditor.client.get<PlanMatrix>('/api/plan')
    expect(read.status).toBe(200)
    expect(cellOf(read.body, learnerId, slicer.jobId)?.status).toBe('planned')
    expect((await put(auditor.client, learnerId, slicer.jobId, { targetDate: null, reason: 'turnover' })).status).toBe(403)
    expect((await auditor.client.delete(`/api/plan/${learnerId}/${slicer.jobId}`)).status).toBe(403)
    expect(cellOf((await coach.client.get<PlanMatrix>('/api/plan')).body, learnerId, slicer.jobId)).toMatchObject({ targetDate: '2030-02-02', reason: 'other' })
  })
})
