// The filters, orders and pages of GET /api/records and its CSV, run in memory on an organisation's
// whole list of records (records-cache.ts keeps it; records-query.ts reads it). Pure: no database.
// The orders are SQL's as they were written for the query (and as tests/unit/records-list.test.ts
// checks them against SQLite): names compare case-insensitively for ASCII letters only (NOCASE),
// everything else by code point (BINARY on UTF-8 text).
import type { RecordRow, RecordSort, RecordsFilter, RecordsPage } from '../../shared/schemas/records'
import { recordsDayRange } from './records-query'

type Direction = 'asc' | 'desc'

/** SQLite's BINARY order for UTF-8 text is code point order; JS compares UTF-16 code units, which differ only around surrogates. */
function compareText(a: string, b: string): number {
  if (a === b) return 0
  const n = Math.min(a.length, b.length)
  for (let i = 0; i < n; i++) {
    let x = a.charCodeAt(i)
    let y = b.charCodeAt(i)
    if (x === y) continue
    // Surrogates (U+D800–DFFF, code points above U+FFFF) sort after U+E000–FFFF in code point order.
    if (x >= 0xD800 && y >= 0xD800) {
      x = x >= 0xE000 ? x - 0x800 : x + 0x2000
      y = y >= 0xE000 ? y - 0x800 : y + 0x2000
    }
    return x < y ? -1 : 1
  }
  return a.length - b.length
}

/** SQLite's NOCASE: only A–Z fold to a–z. */
const nocase = (s: string) => s.replace(/[A-Z]+/g, m => m.toLowerCase())

const sign = (dir: Direction) => (dir === 'asc' ? 1 : -1)

/** `date dir, id dir`; by name: `name nocase dir, its id dir, date desc, id desc`. */
function comparator(sort: RecordSort, dir: Direction): (a: RecordRow, b: RecordRow) => number {
  const s = sign(dir)
  const byDate = (a: RecordRow, b: RecordRow, d: number) => (a.date !== b.date ? (a.date < b.date ? -d : d) : d * compareText(a.id, b.id))
  if (sort === 'date') return (a, b) => byDate(a, b, s)
  const keyOf = sort === 'person'
    ? (r: RecordRow) => [nocase(r.learnerName), r.learnerId] as const
    : (r: RecordRow) => [nocase(r.jobTitle), r.jobId] as const
  const keys = new Map<RecordRow, readonly [string, string]>()
  const key = (r: RecordRow) => {
    let k = keys.get(r)
    if (!k) keys.set(r, (k = keyOf(r)))
    return k
  }
  return (a, b) => {
    const [an, ai] = key(a)
    const [bn, bi] = key(b)
    return s * compareText(an, bn) || s * compareText(ai, bi) || byDate(a, b, -1)
  }
}

/**
 * An organisation's records in each order the list offers, each sorted the first time it is asked
 * for. The rows are frozen and shared by every request; so are the orders once made.
 */
export interface RecordsIndex {
  readonly count: number
  inOrder(sort: RecordSort, dir: Direction): readonly RecordRow[]
}

/** `rows` newest first, as records-query.ts reads them. */
export function recordsIndex(rows: RecordRow[]): RecordsIndex {
  const newestFirst = Object.freeze(rows.map(r => Object.freeze(r)))
  const orders = new Map<string, readonly RecordRow[]>([['date:desc', newestFirst]])
  return {
    count: newestFirst.length,
    inOrder(sort, dir) {
      const name = `${sort}:${dir}`
      let list = orders.get(name)
      if (!list) {
        list = Object.freeze(sort === 'date' && dir === 'asc' ? [...newestFirst].reverse() : [...newestFirst].sort(comparator(sort, dir)))
        orders.set(name, list)
      }
      return list
    },
  }
}

/** Whether a record passes every filter that is set. */
function matcher(filter: RecordsFilter): (r: RecordRow) => boolean {
  const { start, end } = recordsDayRange(filter)
  const tests: Array<(r: RecordRow) => boolean> = []
  if (filter.learnerId) tests.push(r => r.learnerId === filter.learnerId)
  if (filter.jobId) tests.push(r => r.jobId === filter.jobId)
  if (filter.coachUserId) tests.push(r => r.coachUserId === filter.coachUserId)
  if (filter.version !== undefined) tests.push(r => r.versionNumber === filter.version)
  if (filter.kind) tests.push(r => r.kind === filter.kind)
  if (filter.outcome) tests.push(r => r.outcome === filter.outcome)
  if (start !== null) tests.push(r => r.date >= start)
  if (end !== null) tests.push(r => r.date < end)
  return r => tests.every(t => t(r))
}

const directionOf = (filter: RecordsFilter): Direction => filter.dir ?? (filter.sort === 'date' ? 'desc' : 'asc')

/** One page of the records matching the filters, in the chosen order, and how many match in all. */
export function recordsPageOf(index: RecordsIndex, filter: RecordsFilter, page: { limit: number, offset: number }): RecordsPage {
  const matches = matcher(filter)
  const rows: RecordRow[] = []
  let total = 0
  for (const r of index.inOrder(filter.sort, directionOf(filter))) {
    if (!matches(r)) continue
    if (total >= page.offset && rows.length < page.limit) rows.push(r)
    total++
  }
  return { total, limit: page.limit, offset: page.offset, rows }
}

/** Every record matching the filters, in the chosen order, at most `max` (the CSV export). */
export function matchingRecords(index: RecordsIndex, filter: RecordsFilter, max: number): { rows: RecordRow[], truncated: boolean } {
  const page = recordsPageOf(index, filter, { limit: max, offset: 0 })
  return { rows: page.rows, truncated: page.total > max }
}
