// The records list's filters, orders and pages in memory (server/utils/records-list.ts) against
// SQLite itself as the reference: the same random records in an in-memory SQLite table (libSQL, the
// database the server uses), each random query asked as plain SQL with the WHERE, ORDER BY (NOCASE
// names, BINARY ids), LIMIT and OFFSET the list promises, and the calendar days worked out by SQLite's
// own date functions. Source for the collations: SQLite documentation, "Datatypes In SQLite" §7.1
// (BINARY compares with memcmp, NOCASE folds the 26 ASCII capitals only).
import { createClient, type Client } from '@libsql/client'
import fc from 'fast-check'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { matchingRecords, recordsIndex, recordsPageOf } from '../../server/utils/records-list'
import { RECORD_OUTCOMES, RECORD_SORTS, type RecordRow, type RecordsFilter } from '../../shared/schemas/records'

// Names that test the collations: case, accents (not folded by NOCASE), a character above U+FFFF
// (a surrogate pair in JS) beside one in U+E000–FFFF (where UTF-16 and UTF-8 orders disagree), and
// 'émile' listed before 'Émile' so that folding more than ASCII would change the order.
const NAMES = ['ana Lind', 'Ana Lind', 'ANA LIND', 'émile roux', 'Émile Roux', 'emile roux', 'Zoë Baker', 'zoe baker', '=SUM(1)', 'Ｂaker', '😀 Smile', 'bo', 'Bo']
const TITLES = ['Slice bread', 'slice bread', 'Bag sealer', 'Óven', 'oven', 'Ｓlicer', '🍞 Loaf']
const ids = (prefix: string, n: number) => Array.from({ length: n }, (_, i) => `${prefix}${String(i).padStart(2, '0')}-0000-4000-8000-000000000000`)
const LEARNERS = ids('a1', NAMES.length).map((id, i) => ({ id, name: NAMES[i % NAMES.length]! }))
const JOBS = ids('b2', TITLES.length).map((id, i) => ({ id, title: TITLES[i % TITLES.length]! }))
const COACHES = [...ids('c3', 3), null]
const DAY = 86_400_000
const BASE = Date.parse('2026-03-01T00:00:00Z')

const recordArb = fc.record({
  kind: fc.constantFrom('lesson' as const, 'check' as const),
  learner: fc.constantFrom(...LEARNERS),
  job: fc.constantFrom(...JOBS),
  coach: fc.constantFrom(...COACHES),
  version: fc.integer({ min: 1, max: 3 }),
  // Few distinct instants, so ties on the date are common.
  date: fc.integer({ min: 0, max: 40 }).map(h => BASE + h * 3 * 3_600_000),
  outcomeOpen: fc.boolean(),
  decision: fc.constantFrom('ready', 'another-pass'),
  checkOutcome: fc.constantFrom('clean', 'stay', 'reteach'),
})

type RawRecord = typeof recordArb extends fc.Arbitrary<infer T> ? T : never

function toRecord(r: RawRecord, i: number): RecordRow {
  const outcome = r.outcomeOpen ? 'open' : r.kind === 'lesson' ? r.decision : r.checkOutcome
  return {
    kind: r.kind, id: `${String(i).padStart(4, '0')}${r.kind === 'lesson' ? 'l' : 'c'}`, date: r.date, finishedAt: null,
    learnerId: r.learner.id, learnerName: r.learner.name, learnerReference: '', workAreaName: null,
    jobId: r.job.id, jobTitle: r.job.title, versionId: `v${r.version}`, versionNumber: r.version,
    coachUserId: r.coach, coachName: null, outcome: outcome as RecordRow['outcome'], readiness: null, recall: null,
    acknowledgedBy: null, acknowledgedAt: null, place: '', elements: null,
  }
}

const day = fc.integer({ min: -2, max: 6 }).map(d => new Date(BASE + d * DAY).toISOString().slice(0, 10))
const filterArb = fc.record({
  learnerId: fc.option(fc.constantFrom(...LEARNERS.map(l => l.id)), { nil: undefined }),
  jobId: fc.option(fc.constantFrom(...JOBS.map(j => j.id)), { nil: undefined }),
  coachUserId: fc.option(fc.constantFrom(...COACHES.filter((c): c is string => c !== null)), { nil: undefined }),
  version: fc.option(fc.integer({ min: 1, max: 3 }), { nil: undefined }),
  kind: fc.option(fc.constantFrom('lesson' as const, 'check' as const), { nil: undefined }),
  outcome: fc.option(fc.constantFrom(...RECORD_OUTCOMES), { nil: undefined }),
  from: fc.option(day, { nil: undefined }),
  to: fc.option(day, { nil: undefined }),
  tzOffset: fc.constantFrom(0, 300, -840, 600, -330),
  sort: fc.constantFrom(...RECORD_SORTS),
  dir: fc.option(fc.constantFrom('asc' as const, 'desc' as const), { nil: undefined }),
}, { requiredKeys: ['tzOffset', 'sort'] })

let db: Client
beforeAll(() => {
  db = createClient({ url: ':memory:' })
})
afterAll(() => db.close())

/** The reference: the same query as plain SQL over a table of the records. */
async function bySqlite(records: RecordRow[], filter: RecordsFilter, limit: number, offset: number) {
  await db.batch([
    'drop table if exists r',
    'create table r (kind text, id text, date integer, learner_id text, learner_name text, job_id text, job_title text, coach_user_id text, version_number integer, outcome text)',
  ], 'write')
  if (records.length) {
    await db.batch(records.map(r => ({
      sql: 'insert into r values (?,?,?,?,?,?,?,?,?,?)',
      args: [r.kind, r.id, r.date, r.learnerId, r.learnerName, r.jobId, r.jobTitle, r.coachUserId, r.versionNumber, r.outcome],
    })), 'write')
  }
  const where: string[] = []
  const args: Array<string | number> = []
  const add = (clause: string, ...values: Array<string | number>) => {
    where.push(clause)
    args.push(...values)
  }
  if (filter.learnerId) add('learner_id = ?', filter.learnerId)
  if (filter.jobId) add('job_id = ?', filter.jobId)
  if (filter.coachUserId) add('coach_user_id = ?', filter.coachUserId)
  if (filter.version !== undefined) add('version_number = ?', filter.version)
  if (filter.kind) add('kind = ?', filter.kind)
  if (filter.outcome) add('outcome = ?', filter.outcome)
  // Local midnight of the day, in UTC ms: SQLite's own calendar, then the person's offset.
  if (filter.from) add('date >= unixepoch(?) * 1000 + ? * 60000', filter.from, filter.tzOffset)
  if (filter.to) add('date < unixepoch(?, \'+1 day\') * 1000 + ? * 60000', filter.to, filter.tzOffset)
  const dir = filter.dir ?? (filter.sort === 'date' ? 'desc' : 'asc')
  const order = filter.sort === 'date'
    ? `date ${dir}, id ${dir}`
    : `${filter.sort === 'person' ? 'learner_name' : 'job_title'} collate nocase ${dir}, ${filter.sort === 'person' ? 'learner_id' : 'job_id'} ${dir}, date desc, id desc`
  const whereSql = where.length ? `where ${where.join(' and ')}` : ''
  const page = await db.execute({ sql: `select id from r ${whereSql} order by ${order} limit ? offset ?`, args: [...args, limit, offset] })
  const count = await db.execute({ sql: `select count(*) as n from r ${whereSql}`, args })
  return { total: Number(count.rows[0]!.n), ids: page.rows.map(row => String(row.id)) }
}

/** Newest first, as the server reads them (records-query.ts: started_at desc, id desc). */
const newestFirst = (records: RecordRow[]) => [...records].sort((a, b) => b.date - a.date || (a.id < b.id ? 1 : a.id > b.id ? -1 : 0))

describe('recordsPageOf against SQLite', () => {
  it('filters, orders and pages exactly as the SQL would', async () => {
    await fc.assert(fc.asyncProperty(
      fc.array(recordArb, { maxLength: 60 }),
      filterArb,
      fc.integer({ min: 1, max: 25 }),
      fc.integer({ min: 0, max: 70 }),
      async (raw, filter, limit, offset) => {
        const records = raw.map(toRecord)
        const index = recordsIndex(newestFirst(records))
        const mine = recordsPageOf(index, filter as RecordsFilter, { limit, offset })
        const reference = await bySqlite(records, filter as RecordsFilter, limit, offset)
        expect(mine.total).toBe(reference.total)
        expect(mine.rows.map(r => r.id)).toEqual(reference.ids)
        expect(mine).toMatchObject({ limit, offset })
      },
    ), { numRuns: 300 })
  })

  it('orders names as SQLite does: ASCII case folded, accents and other scripts by code point', async () => {
    const records = LEARNERS.map((l, i) => toRecord({ kind: 'lesson', learner: l, job: JOBS[0]!, coach: null, version: 1, date: BASE, outcomeOpen: true, decision: 'ready', checkOutcome: 'clean' }, i))
    for (const dir of ['asc', 'desc'] as const) {
      const filter = { sort: 'person', dir, tzOffset: 0 } as RecordsFilter
      const mine = recordsPageOf(recordsIndex(newestFirst(records)), filter, { limit: 50, offset: 0 }).rows.map(r => r.id)
      expect(mine).toEqual((await bySqlite(records, filter, 50, 0)).ids)
    }
    // The one place UTF-16 and code point order part: U+FF22 ('Ｂ') before U+1F600 ('😀').
    const names = recordsPageOf(recordsIndex(newestFirst(records)), { sort: 'person', tzOffset: 0 } as RecordsFilter, { limit: 50, offset: 0 }).rows.map(r => r.learnerName)
    expect(names.indexOf('Ｂaker')).toBeLessThan(names.indexOf('😀 Smile'))
  })

  it('exports every match up to the limit and says when there were more', () => {
    const records = Array.from({ length: 7 }, (_, i) => toRecord({ kind: 'check', learner: LEARNERS[0]!, job: JOBS[0]!, coach: null, version: 1, date: BASE + i, outcomeOpen: false, decision: 'ready', checkOutcome: 'clean' }, i))
    const index = recordsIndex(newestFirst(records))
    expect(matchingRecords(index, { sort: 'date', tzOffset: 0 } as RecordsFilter, 7)).toMatchObject({ truncated: false })
    const cut = matchingRecords(index, { sort: 'date', tzOffset: 0 } as RecordsFilter, 5)
    expect(cut.truncated).toBe(true)
    expect(cut.rows.map(r => r.id)).toEqual(['0006c', '0005c', '0004c', '0003c', '0002c'])
  })

  it('shares frozen rows: a request cannot change what the next one sees', () => {
    const index = recordsIndex([toRecord({ kind: 'lesson', learner: LEARNERS[0]!, job: JOBS[0]!, coach: null, version: 1, date: BASE, outcomeOpen: true, decision: 'ready', checkOutcome: 'clean' }, 0)])
    const [row] = index.inOrder('date', 'desc')
    expect(Object.isFrozen(row)).toBe(true)
    expect(Object.isFrozen(index.inOrder('job', 'asc'))).toBe(true)
  })
})
