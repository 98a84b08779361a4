// The records list is kept per organisation in each process (server/utils/records-cache.ts) and must
// never answer from stale data: two built servers on one SQLite file, as two app instances behind a
// load balancer. Before every write both servers have just answered GET /api/records (so both hold
// the organisation's list); the write goes to one of them, and the next GET on each, and the CSV,
// must show it. One kind of write per test, one for each thing a record shows.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { TestServer } from '../support/server'
import type { Client } from '../support/http'
import { addMember, signInOn, signUp } from '../support/accounts'
import { startTwoServers, type TwoServers } from '../support/two-servers'
import { cleanTryout, publishedJob, rosterLearner } from '../support/breakdowns'
import type { RecordRow, RecordsPage } from '../../shared/schemas/records'

let servers: TwoServers
let a: TestServer
let b: TestServer
let admin: Awaited<ReturnType<typeof signUp>>
let coach: Awaited<ReturnType<typeof addMember>>
/** The admin signed in on each server: [on a, on b]. */
let readers: [Client, Client]
let coachOnB: Client
let adminOnB: Client
let slicer: Awaited<ReturnType<typeof publishedJob>>
let areaId: string
let learnerId: string
const lessonId = randomUUID()
const deviceId = randomUUID()
const startedAt = Date.now() - 3_600_000

/** GET /api/records from both servers; both then hold the organisation's list. */
async function lists(): Promise<[RecordsPage, RecordsPage]> {
  const answers = await Promise.all(readers.map(r => r.get<RecordsPage>('/api/records')))
  for (const res of answers) expect(res.status, res.text).toBe(200)
  return [answers[0]!.body, answers[1]!.body]
}

/** The records CSV from both servers, as lines. */
async function csvs(): Promise<string[][]> {
  const answers = await Promise.all(readers.map(r => r.get('/api/records.csv')))
  for (const res of answers) expect(res.status, res.text).toBe(200)
  return answers.map(res => res.text.replace(/^\uFEFF/, '').trim().split('\r\n'))
}

const theLesson = (page: RecordsPage): RecordRow | undefined => page.rows.find(r => r.id === lessonId)

function lesson(over: Record<string, unknown> = {}) {
  return { id: lessonId, coachUserId: coach.userId, learnerId, jobId: slicer.jobId, versionId: slicer.versionId, place: 'Oven 1', startedAt, updatedAt: startedAt + 60_000, signedOffAt: null, decision: null, ...over }
}

beforeAll(async () => {
  servers = await startTwoServers('records-cache')
  a = servers.a
  b = servers.b
  admin = await signUp(a, 'Crumb Records Bakery')
  coach = await addMember(a, admin.client, 'coach')
  coachOnB = await signInOn(b, coach.email)
  adminOnB = await signInOn(b, admin.email)
  readers = [admin.client, adminOnB]
  areaId = (await admin.client.post('/api/work-areas', { name: 'Bake line' })).body.id
  slicer = await publishedJob(admin.client)
  learnerId = await rosterLearner(admin.client, 'Marit Loaves')
  expect((await admin.client.patch(`/api/learners/${learnerId}`, { workAreaId: areaId, reference: 'B-1' })).status).toBe(200)
}, 180_000)

afterAll(() => servers?.stop())

describe('the next GET /api/records (and CSV) on either server shows', () => {
  it('a lesson pushed through sync on the other server, then its sign-off', async () => {
    for (const page of await lists()) expect(page.total).toBe(0)
    const first = await coachOnB.post('/api/sync', { deviceId, lessons: [lesson()], events: cleanTryout(lessonId, deviceId, slicer.content, 1, startedAt + 1000), checks: [] })
    expect(first.status, first.text).toBe(200)
    expect(first.body.rejected).toEqual([])
    for (const page of await lists()) {
      expect(page.total).toBe(1)
      expect(theLesson(page)).toMatchObject({ outcome: 'open', finishedAt: null, acknowledgedBy: null, learnerName: 'Marit Loaves' })
    }

    const signedOffAt = startedAt + 1_800_000
    const signOff = lesson({ updatedAt: signedOffAt, signedOffAt, decision: 'ready', acknowledgement: { name: 'Marit Loaves', signature: null, at: signedOffAt } })
    const second = await coachOnB.post('/api/sync', { deviceId, lessons: [signOff], events: [], checks: [] })
    expect(second.status, second.text).toBe(200)
    for (const page of await lists()) {
      expect(page.total).toBe(1)
      expect(theLesson(page)).toMatchObject({ outcome: 'ready', finishedAt: signedOffAt, acknowledgedBy: 'Marit Loaves', readiness: 'ready' })
    }
    for (const lines of await csvs()) expect(lines[1]).toContain('"Ready to work alone"')
  })

  it('a learner renamed, with a new reference', async () => {
    for (const page of await lists()) expect(theLesson(page)).toMatchObject({ learnerName: 'Marit Loaves', learnerReference: 'B-1' })
    expect((await coachOnB.patch(`/api/learners/${learnerId}`, { name: 'Marit Loaf-Baker', reference: 'B-7' })).status).toBe(200)
    for (const page of await lists()) expect(theLesson(page)).toMatchObject({ learnerName: 'Marit Loaf-Baker', learnerReference: 'B-7' })
    for (const lines of await csvs()) expect(lines[1]).toContain('"Marit Loaf-Baker"')
  })

  it('a job renamed', async () => {
    for (const page of await lists()) expect(theLesson(page)?.jobTitle).toBe('Change the slicer blade set')
    expect((await adminOnB.patch(`/api/jobs/${slicer.jobId}`, { title: 'Change the slicer blades' })).status).toBe(200)
    for (const page of await lists()) expect(theLesson(page)?.jobTitle).toBe('Change the slicer blades')
    for (const lines of await csvs()) expect(lines[1]).toContain('"Change the slicer blades"')
  })

  it('a work area renamed, then deleted', async () => {
    for (const page of await lists()) expect(theLesson(page)?.workAreaName).toBe('Bake line')
    expect((await adminOnB.patch(`/api/work-areas/${areaId}`, { name: 'Ovens and proving' })).status).toBe(200)
    for (const page of await lists()) expect(theLesson(page)?.workAreaName).toBe('Ovens and proving')
    expect((await adminOnB.delete(`/api/work-areas/${areaId}`)).status).toBe(204)
    for (const page of await lists()) expect(theLesson(page)?.workAreaName).toBeNull()
  })

  it('only its own organisation, each held apart', async () => {
    const other = await signUp(b, 'Second Records Bakery')
    await lists()
    const theirs = (await other.client.get<RecordsPage>('/api/records')).body
    expect(theirs).toMatchObject({ total: 0, rows: [] })
    for (const page of await lists()) expect(page.rows.map(r => r.id)).toEqual([lessonId])
  })
})
