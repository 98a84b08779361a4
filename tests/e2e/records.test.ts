// GET /api/records and GET /api/records.csv over HTTP against the built server: filters, sorting,
// paging, the CSV's columns (with the sources that ask for them), CSV injection, who may read,
// and that another organisation's records are never listed. Also the review's GET /api/lessons/[id].
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { addMember, signUp } from '../support/accounts'
import { cleanTryout, publishedJob, rosterLearner, slicerContent } from '../support/breakdowns'
import { sql } from '../support/db'
import type { Client } from '../support/http'
import type { RecordRow, RecordsPage } from '../../shared/schemas/records'

let server: TestServer
let admin: Awaited<ReturnType<typeof signUp>>
let coach: Awaited<ReturnType<typeof addMember>>
let coach2: Awaited<ReturnType<typeof addMember>>
let auditor: Awaited<ReturnType<typeof addMember>>
let learnerMember: Awaited<ReturnType<typeof addMember>>
let other: Awaited<ReturnType<typeof signUp>>
let slicer: Awaited<ReturnType<typeof publishedJob>>
let slicerV2: string
let sealer: Awaited<ReturnType<typeof publishedJob>>
let ana: string
let bo: string
let hostile: string
const ids: Record<string, string> = {}
const otherIds: Record<string, string> = {}

const day = (d: string, hour = 9) => Date.parse(`${d}T${String(hour).padStart(2, '0')}:00:00Z`)

async function push(client: Client, lesson: Record<string, unknown>, content = slicer.content) {
  const deviceId = randomUUID()
  const events = cleanTryout(lesson.id as string, deviceId, content, 1, (lesson.startedAt as number) + 1000)
  const res = await client.post('/api/sync', { deviceId, lessons: [lesson], events, checks: [] })
  if (res.status !== 200 || res.body.rejected.length) throw new Error(`sync: ${res.status} ${res.text}`)
}

function lesson(over: Record<string, unknown>) {
  const startedAt = over.startedAt as number
  return { id: randomUUID(), place: 'Slicer 2', updatedAt: startedAt + 3_600_000, signedOffAt: null, decision: null, ...over }
}

// Spot checks reach the server through POST /api/sync (helper "checks" owns that merge); this file
// tests the records list, so its check rows are written straight into the table as that merge
// stores them (outcome computed, finished or not).
async function spotCheck(organisationId: string, row: { learnerId: string, jobId: string, versionId: string, coachUserId: string, startedAt: number, finishedAt: number | null, outcome: string | null, elements: string[] }) {
  const id = randomUUID()
  await sql(server.databaseUrl, `insert into spot_checks (id, organisation_id, coach_user_id, learner_id, job_id, version_id, started_at, elements, note, finished_at, outcome, interval_index, client_updated_at, updated_by_device)
    values (?,?,?,?,?,?,?,?,'',?,?,0,?,?)`, [id, organisationId, row.coachUserId, row.learnerId, row.jobId, row.versionId, row.startedAt, JSON.stringify(row.elements), row.finishedAt, row.outcome, row.startedAt, randomUUID()])
  return id
}

beforeAll(async () => {
  server = await startServer()
  admin = await signUp(server, 'Records bakery')
  coach = await addMember(server, admin.client, 'coach')
  coach2 = await addMember(server, admin.client, 'coach')
  auditor = await addMember(server, admin.client, 'auditor')
  learnerMember = await addMember(server, admin.client, 'learner')
  const area = (await admin.client.post('/api/work-areas', { name: 'Slicing and bagging' })).body.id as string
  slicer = await publishedJob(admin.client, slicerContent(), 'Change the slicer blade set')
  // Version 2 of the slicer job: a draft copied from v1 (same lineage ids), published.
  const draft = await admin.client.post(`/api/jobs/${slicer.jobId}/versions`)
  const v2 = structuredClone(slicer.content)
  v2.units[0]!.steps[2]!.text = 'Fit the new blade set, teeth down'
  await admin.client.patch(`/api/versions/${draft.body.id}`, { revision: draft.body.revision, content: v2 })
  const published = await admin.client.post(`/api/versions/${draft.body.id}/publish`, { changeNote: 'Teeth down.' })
  if (published.status !== 200) throw new Error(`publish v2: ${published.text}`)
  slicerV2 = draft.body.id
  sealer = await publishedJob(admin.client, slicerContent(), 'Thread film on the bag sealer')
  ana = await rosterLearner(admin.client, 'Ana Okafor-Lind')
  bo = await rosterLearner(admin.client, 'Bo Treharne')
  await admin.client.patch(`/api/learners/${ana}`, { workAreaId: area, reference: 'B-104' })
  // A roster name and a place that a spreadsheet would run as formulas.
  hostile = await rosterLearner(admin.client, '=HYPERLINK("http://evil.example","click")')

  const l1 = lesson({ coachUserId: coach.userId, learnerId: ana, jobId: slicer.jobId, versionId: slicer.versionId, startedAt: day('2026-03-01'), signedOffAt: day('2026-03-01', 11), decision: 'ready', acknowledgement: { name: 'Ana Okafor-Lind', signature: null, at: day('2026-03-01', 11) } })
  await push(coach.client, l1)
  ids.l1 = l1.id as string
  const l2 = lesson({ coachUserId: coach2.userId, learnerId: bo, jobId: slicer.jobId, versionId: slicerV2, startedAt: day('2026-03-05'), signedOffAt: day('2026-03-05', 12), decision: 'another-pass' })
  await push(coach2.client, l2, v2)
  ids.l2 = l2.id as string
  const l3 = lesson({ coachUserId: coach.userId, learnerId: ana, jobId: sealer.jobId, versionId: sealer.versionId, startedAt: day('2026-03-10') })
  await push(coach.client, l3, sealer.content)
  ids.l3 = l3.id as string
  const l4 = lesson({ coachUserId: coach.userId, learnerId: hostile, jobId: sealer.jobId, versionId: sealer.versionId, startedAt: day('2026-03-20'), place: '@SUM(1+1)', signedOffAt: day('2026-03-20', 10), decision: 'ready' })
  await push(coach.client, l4, sealer.content)
  ids.l4 = l4.id as string
  ids.c1 = await spotCheck(admin.organisationId, { learnerId: bo, jobId: slicer.jobId, versionId: slicerV2, coachUserId: coach.userId, startedAt: day('2026-03-12'), finishedAt: day('2026-03-12', 10), outcome: 'clean', elements: [randomUUID(), randomUUID()] })
  ids.c2 = await spotCheck(admin.organisationId, { learnerId: ana, jobId: slicer.jobId, versionId: slicer.versionId, coachUserId: coach2.userId, startedAt: day('2026-03-15'), finishedAt: null, outcome: null, elements: [randomUUID()] })

  // Another organisation with a lesson and a check of its own.
  other = await signUp(server, 'Other bakery')
  const otherCoach = await addMember(server, other.client, 'coach')
  const otherJob = await publishedJob(other.client, slicerContent(), 'Other slicer')
  otherIds.learner = await rosterLearner(other.client, 'Ana Okafor-Lind')
  const ol = lesson({ coachUserId: otherCoach.userId, learnerId: otherIds.learner, jobId: otherJob.jobId, versionId: otherJob.versionId, startedAt: day('2026-03-02'), signedOffAt: day('2026-03-02', 10), decision: 'ready' })
  await push(otherCoach.client, ol, otherJob.content)
  otherIds.lesson = ol.id as string
  otherIds.job = otherJob.jobId
  otherIds.coach = otherCoach.userId
  otherIds.check = await spotCheck(other.organisationId, { learnerId: otherIds.learner, jobId: otherJob.jobId, versionId: otherJob.versionId, coachUserId: otherCoach.userId, startedAt: day('2026-03-03'), finishedAt: day('2026-03-03', 10), outcome: 'reteach', elements: [] })
}, 180_000)
afterAll(() => server?.stop())

async function list(client: Client, query = ''): Promise<RecordsPage> {
  const res = await client.get<RecordsPage>(`/api/records${query}`)
  expect(res.status, res.text).toBe(200)
  return res.body
}
const idsOf = (rows: RecordRow[]) => rows.map(r => r.id)

describe('GET /api/records', () => {
  it('lists every lesson and spot check of the organisation, newest first, with a total', async () => {
    const page = await list(admin.client)
    expect(page.total).toBe(6)
    expect(page.offset).toBe(0)
    expect(idsOf(page.rows)).toEqual([ids.l4, ids.c2, ids.c1, ids.l3, ids.l2, ids.l1])
    const l1 = page.rows.find(r => r.id === ids.l1)!
    expect(l1).toMatchObject({
      kind: 'lesson', learnerName: 'Ana Okafor-Lind', learnerReference: 'B-104', workAreaName: 'Slicing and bagging',
      jobTitle: 'Change the slicer blade set', versionNumber: 1, coachName: 'Test coach', outcome: 'ready',
      readiness: 'ready', recall: 100, acknowledgedBy: 'Ana Okafor-Lind', acknowledgedAt: day('2026-03-01', 11),
      date: day('2026-03-01'), finishedAt: day('2026-03-01', 11), place: 'Slicer 2', elements: null,
    })
    expect(page.rows.find(r => r.id === ids.c1)).toMatchObject({ kind: 'check', outcome: 'clean', versionNumber: 2, elements: 2, recall: null, finishedAt: day('2026-03-12', 10) })
    expect(page.rows.find(r => r.id === ids.c2)).toMatchObject({ kind: 'check', outcome: 'open', finishedAt: null })
    expect(page.rows.find(r => r.id === ids.l3)).toMatchObject({ outcome: 'open', finishedAt: null })
  })

  it('filters by person, job, coach, version, kind and outcome, on the server', async () => {
    expect(idsOf((await list(admin.client, `?learnerId=${ana}`)).rows)).toEqual([ids.c2, ids.l3, ids.l1])
    expect(idsOf((await list(admin.client, `?jobId=${sealer.jobId}`)).rows)).toEqual([ids.l4, ids.l3])
    expect(idsOf((await list(admin.client, `?coachUserId=${coach2.userId}`)).rows)).toEqual([ids.c2, ids.l2])
    expect(idsOf((await list(admin.client, `?jobId=${slicer.jobId}&version=2`)).rows)).toEqual([ids.c1, ids.l2])
    expect(idsOf((await list(admin.client, '?kind=check')).rows)).toEqual([ids.c2, ids.c1])
    expect(idsOf((await list(admin.client, '?outcome=ready')).rows)).toEqual([ids.l4, ids.l1])
    expect(idsOf((await list(admin.client, '?outcome=open')).rows)).toEqual([ids.c2, ids.l3])
    expect(idsOf((await list(admin.client, '?outcome=clean')).rows)).toEqual([ids.c1])
    expect((await list(admin.client, '?kind=lesson&outcome=clean')).total).toBe(0)
    // Several at once, and empty form fields mean "no filter".
    const both = await list(admin.client, `?learnerId=${ana}&jobId=${slicer.jobId}&coachUserId=&outcome=`)
    expect(idsOf(both.rows)).toEqual([ids.c2, ids.l1])
    expect(both.total).toBe(2)
  })

  it('filters by the person\'s own calendar days, both ends included', async () => {
    expect(idsOf((await list(admin.client, '?from=2026-03-05&to=2026-03-12')).rows)).toEqual([ids.c1, ids.l3, ids.l2])
    expect(idsOf((await list(admin.client, '?from=2026-03-15')).rows)).toEqual([ids.l4, ids.c2])
    expect(idsOf((await list(admin.client, '?to=2026-03-01')).rows)).toEqual([ids.l1])
    // 09:00 UTC on 1 March is 04:00 on 1 March in New York (UTC−5, getTimezoneOffset +300), 23:00 on
    // 1 March in Kiritimati (UTC+14, −840), but 23:00 on 28 February in Honolulu (UTC−10, +600).
    expect(idsOf((await list(admin.client, '?from=2026-03-01&to=2026-03-01&tzOffset=300')).rows)).toEqual([ids.l1])
    expect(idsOf((await list(admin.client, '?from=2026-03-01&to=2026-03-01&tzOffset=-840')).rows)).toEqual([ids.l1])
    expect(idsOf((await list(admin.client, '?from=2026-03-01&to=2026-03-01&tzOffset=600')).rows)).toEqual([])
    expect(idsOf((await list(admin.client, '?from=2026-02-28&to=2026-02-28&tzOffset=600')).rows)).toEqual([ids.l1])
  })

  it('sorts by date, person or job, either way', async () => {
    expect(idsOf((await list(admin.client, '?sort=date&dir=asc')).rows)).toEqual([ids.l1, ids.l2, ids.l3, ids.c1, ids.c2, ids.l4])
    const byPerson = (await list(admin.client, '?sort=person')).rows
    // '=' sorts before letters; within a person, newest first.
    expect(byPerson.map(r => r.learnerName)).toEqual(['=HYPERLINK("http://evil.example","click")', 'Ana Okafor-Lind', 'Ana Okafor-Lind', 'Ana Okafor-Lind', 'Bo Treharne', 'Bo Treharne'])
    expect(idsOf(byPerson).slice(1, 4)).toEqual([ids.c2, ids.l3, ids.l1])
    const byPersonDesc = (await list(admin.client, '?sort=person&dir=desc')).rows
    expect(byPersonDesc.map(r => r.learnerName)[0]).toBe('Bo Treharne')
    const byJob = (await list(admin.client, '?sort=job')).rows
    expect(byJob.map(r => r.jobTitle)).toEqual([...Array(4).fill('Change the slicer blade set'), ...Array(2).fill('Thread film on the bag sealer')])
  })

  it('pages with limit and offset: pages do not overlap and the total stays the same', async () => {
    const seen: string[] = []
    for (let offset = 0; offset < 6; offset += 4) {
      const page = await list(admin.client, `?limit=4&offset=${offset}`)
      expect(page.total).toBe(6)
      expect(page.limit).toBe(4)
      expect(page.offset).toBe(offset)
      seen.push(...idsOf(page.rows))
    }
    expect(seen).toEqual(idsOf((await list(admin.client)).rows))
    const past = await list(admin.client, '?limit=4&offset=40')
    expect(past).toMatchObject({ total: 6, rows: [] })
  })

  it('answers 422 with a reason for bad filters and pages', async () => {
    for (const [query, field] of [['?limit=0', 'limit'], ['?limit=201', 'limit'], ['?offset=-1', 'offset'], ['?learnerId=nope', 'learnerId'],
      ['?from=2026-03-10&to=2026-03-01', 'to'], ['?from=2026-02-30', 'from'], ['?from=1.3.2026', 'from'], ['?sort=age', 'sort'], ['?dir=up', 'dir'],
      ['?outcome=passed', 'outcome'], ['?version=1.5', 'version'], ['?tzOffset=9999', 'tzOffset']] as const) {
      const res = await admin.client.get(`/api/records${query}`)
      expect(res.status, query).toBe(422)
      expect(Object.keys(res.body.data.fieldErrors), query).toContain(field)
    }
    const csv = await admin.client.get('/api/records.csv?from=2026-03-10&to=2026-03-01')
    expect(csv.status).toBe(422)
  })

  it('lets coaches and auditors read; learners may not', async () => {
    expect((await list(auditor.client)).total).toBe(6)
    expect((await list(coach.client)).total).toBe(6)
    for (const path of ['/api/records', '/api/records.csv']) {
      const res = await learnerMember.client.get(path)
      expect(res.status, path).toBe(403)
      expect(res.body.data.message).toMatch(/auditor/)
    }
  })

  it('names the coaches the coach filter offers, of this organisation only', async () => {
    const res = await auditor.client.get<Array<{ id: string, name: string }>>('/api/records/coaches')
    expect(res.status).toBe(200)
    expect(res.body.map(c => c.id).sort()).toEqual([admin.userId, coach.userId, coach2.userId].sort())
    expect(res.body.map(c => c.id)).not.toContain(otherIds.coach)
    expect((await learnerMember.client.get('/api/records/coaches')).status).toBe(403)
  })

  it('never lists another organisation\'s records, even when asked for its ids', async () => {
    const mine = await list(other.client)
    expect(idsOf(mine.rows).sort()).toEqual([otherIds.lesson, otherIds.check].sort())
    const everything = await list(admin.client, '?limit=200')
    expect(idsOf(everything.rows)).not.toContain(otherIds.lesson)
    expect(idsOf(everything.rows)).not.toContain(otherIds.check)
    for (const q of [`?learnerId=${otherIds.learner}`, `?jobId=${otherIds.job}`, `?coachUserId=${otherIds.coach}`]) {
      expect(await list(admin.client, q), q).toMatchObject({ total: 0, rows: [] })
      const csv = await admin.client.get(`/api/records.csv${q}`)
      expect(csv.text.trim().split('\r\n')).toHaveLength(1)
    }
    // And a lesson of the other organisation answers 404 on the review route.
    const review = await admin.client.get(`/api/lessons/${otherIds.lesson}`)
    expect(review.status).toBe(404)
    expect((await other.client.get(`/api/lessons/${otherIds.lesson}`)).status).toBe(200)
  })
})

/** RFC 4180 rows (every cell quoted by the export), without the byte order mark. */
function parseCsv(text: string): string[][] {
  const rows: string[][] = []
  let row: string[] = []
  let cell = ''
  let quoted = false
  const body = text.replace(/^\uFEFF/, '')
  for (let i = 0; i < body.length; i++) {
    const ch = body[i]!
    if (quoted) {
      if (ch === '"' && body[i + 1] === '"') {
        cell += '"'
        i++
      }
      else if (ch === '"') quoted = false
      else cell += ch
    }
    else if (ch === '"') quoted = true
    else if (ch === ',') {
      row.push(cell)
      cell = ''
    }
    else if (ch === '\r' && body[i + 1] === '\n') {
      row.push(cell)
      rows.push(row)
      row = []
      cell = ''
      i++
    }
    else cell += ch
  }
  if (cell || row.length) rows.push([...row, cell])
  return rows
}

describe('GET /api/records.csv', () => {
  it('has the columns auditors ask for, each with its source', async () => {
    const res = await auditor.client.get('/api/records.csv')
    expect(res.status).toBe(200)
    expect(res.headers.get('content-type')).toMatch(/^text\/csv; charset=utf-8/)
    expect(res.headers.get('content-disposition')).toMatch(/^attachment; filename="fourfold-records-\d{4}-\d{2}-\d{2}\.csv"$/)
    const [header, ...rows] = parseCsv(res.text)
    expect(header).toEqual([
      'record_type', // which kind of record: a lesson (training) or a spot check (evaluation) — our own column
      'record_id', // our own column, to find the record again
      'learner_name', // OSHA 29 CFR 1910.1030(h)(2)(i)(D): names of persons attending; 29 CFR 1910.178(l)(6): name of the operator
      'learner_reference', // our own column (staff number), to tell two people of one name apart
      'learner_work_area', // OSHA 29 CFR 1910.1030(h)(2)(i)(D): job titles of persons attending — Fourfold keeps no job title, the work area is the nearest it has
      'job', // OSHA 29 CFR 1910.1030(h)(2)(i)(B): contents or a summary of the training (the job taught)
      'breakdown_version', // common practice, no source: which version of the breakdown was taught
      'content_summary', // OSHA 29 CFR 1910.1030(h)(2)(i)(B): contents or a summary of the training sessions
      'training_date', // OSHA 29 CFR 1910.1030(h)(2)(i)(A): dates of the training sessions; 29 CFR 1910.178(l)(6): date of the training
      'evaluation_date', // 29 CFR 1910.178(l)(6): date of the evaluation (sign-off of the lesson, end of the check)
      'trainer_or_evaluator', // OSHA 29 CFR 1910.1030(h)(2)(i)(C): names of persons conducting the training; 29 CFR 1910.178(l)(6): identity of the person(s) performing the training or evaluation
      'outcome', // ISO 9001:2015 §7.2 d): retain documented information as evidence of competence
      'readiness_suggested', // ISO 9001:2015 §7.2 d): evidence of competence (Fourfold's suggestion beside the coach's decision)
      'recall_score', // ISO 9001:2015 §7.2 d): evidence of competence
      'acknowledged_by_learner', // ISO 9001:2015 §7.2 d): retained evidence — the learner's own acknowledgement
      'acknowledged_at', // ISO 9001:2015 §7.2 d): retained evidence — when it was given
      'place', // our own column: where the training took place
    ])
    // Quotations from memory of the texts: 1910.1030(h)(2)(i) lists (A) dates, (B) contents or a summary,
    // (C) names and qualifications of persons conducting the training, (D) names and job titles of all
    // persons attending; 1910.178(l)(6) asks to certify name, date of training, date of evaluation and
    // the identity of the person(s) performing the training or evaluation.
    expect(rows).toHaveLength(6)
    const col = (name: string) => header!.indexOf(name)
    const l1 = rows.find(r => r[col('record_id')] === ids.l1)!
    expect(l1[col('record_type')]).toBe('lesson')
    expect(l1[col('learner_name')]).toBe('Ana Okafor-Lind')
    expect(l1[col('learner_reference')]).toBe('B-104')
    expect(l1[col('learner_work_area')]).toBe('Slicing and bagging')
    expect(l1[col('job')]).toBe('Change the slicer blade set')
    expect(l1[col('breakdown_version')]).toBe('1')
    expect(l1[col('content_summary')]).toBe('Job Instruction lesson (prepare, present, try-out, follow up) on "Change the slicer blade set", breakdown version 1')
    expect(l1[col('training_date')]).toBe('2026-03-01T09:00:00.000Z')
    expect(l1[col('evaluation_date')]).toBe('2026-03-01T11:00:00.000Z')
    expect(l1[col('trainer_or_evaluator')]).toBe('Test coach')
    expect(l1[col('outcome')]).toBe('Ready to work alone')
    expect(l1[col('readiness_suggested')]).toBe('ready')
    expect(l1[col('recall_score')]).toBe('100')
    expect(l1[col('acknowledged_by_learner')]).toBe('Ana Okafor-Lind')
    expect(l1[col('acknowledged_at')]).toBe('2026-03-01T11:00:00.000Z')
    const c1 = rows.find(r => r[col('record_id')] === ids.c1)!
    expect(c1[col('record_type')]).toBe('spot check')
    expect(c1[col('content_summary')]).toBe('Spot check of 2 elements of "Change the slicer blade set", breakdown version 2')
    expect(c1[col('outcome')]).toBe('Check clean')
    expect(c1[col('evaluation_date')]).toBe('2026-03-12T10:00:00.000Z')
    const open = rows.find(r => r[col('record_id')] === ids.l3)!
    expect(open[col('evaluation_date')]).toBe('')
    expect(open[col('outcome')]).toBe('Not finished')
  })

  it('keeps the filters and the order of the list', async () => {
    const res = await admin.client.get(`/api/records.csv?learnerId=${ana}&sort=date&dir=asc`)
    const [header, ...rows] = parseCsv(res.text)
    expect(rows.map(r => r[header!.indexOf('record_id')])).toEqual([ids.l1, ids.l3, ids.c2])
  })

  it('neutralises cells a spreadsheet would run as formulas (OWASP CSV injection) and quotes every cell', async () => {
    const res = await admin.client.get(`/api/records.csv?learnerId=${hostile}`)
    const [header, row] = parseCsv(res.text)
    // OWASP "CSV Injection": a cell starting with =, +, -, @, tab or carriage return is prefixed with '.
    expect(row![header!.indexOf('learner_name')]).toBe('\'=HYPERLINK("http://evil.example","click")')
    expect(row![header!.indexOf('place')]).toBe('\'@SUM(1+1)')
    // Every cell quoted, embedded quotes doubled (RFC 4180 §2.5–2.7).
    const line = res.text.replace(/^\uFEFF/, '').split('\r\n')[1]!
    expect(line).toContain('"\'=HYPERLINK(""http://evil.example"",""click"")"')
    expect(line).toMatch(/^"(?:[^"]|"")*"(?:,"(?:[^"]|"")*")*$/)
    expect(parseCsv(`${line}\r\n`)[0]).toHaveLength(header!.length)
  })
})

describe('GET /api/lessons/[id] for the review', () => {
  it('carries what the review shows: the job\'s preparation items, the marks of both coaches', async () => {
    const deviceId = randomUUID()
    const k = slicer.content.units[0]!.steps[0]!.keyPoints[0]!
    const observe = await coach2.client.post('/api/sync', { deviceId, lessons: [], checks: [], events: [
      { id: randomUUID(), lessonId: ids.l1, pass: 'T3-1', elementId: k.id, kind: 'observer-mark', value: 'cued', clientTime: day('2026-03-01', 10), deviceId, seq: 1 },
    ] })
    expect(observe.status).toBe(200)
    expect(observe.body.rejected).toEqual([])
    const res = await auditor.client.get(`/api/lessons/${ids.l1}`)
    expect(res.status).toBe(200)
    expect(res.body.job).toEqual({ purpose: '', toolsAndMaterials: [], workplaceArrangement: '' })
    expect(res.body.events.filter((e: { kind: string }) => e.kind === 'observer-mark')).toHaveLength(1)
    // The observer's mark changes nothing of the lesson's own score.
    expect(res.body.score).toMatchObject({ recall: 100, readiness: 'ready' })
    expect(res.body.acknowledgement).toEqual({ name: 'Ana Okafor-Lind', signature: null, at: day('2026-03-01', 11) })
  })
})
