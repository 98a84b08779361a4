// The plan screen's words and tones: a cell's tone (colour is the second cue, never alone),
// the query string shared by the matrix and its CSV export, and which rows a page shows.
import type { CellStatus } from '#shared/types/plan'
import type { PlanQuery } from '#shared/schemas/plan'
import type { Tone } from '~/utils/breakdown-words'

export const CELL_TONES: Record<CellStatus, Tone> = {
  'not-needed': 'plain',
  'planned': 'action',
  'in-training': 'action',
  'ready': 'done',
  'check-due': 'attention',
  'reteach': 'problem',
  'late': 'problem',
}

/** The order the status filter lists them in: what needs doing first. */
export const STATUS_FILTER_ORDER: CellStatus[] = ['late', 'reteach', 'check-due', 'planned', 'in-training', 'ready', 'not-needed']

/** The filters as a query object with only what is set (for useFetch and for the CSV link). */
export function planQueryOf(filters: { workAreaId: string, jobId: string, status: string, q: string }, offset = 0): Partial<PlanQuery> {
  const query: Record<string, string | number> = {}
  if (filters.workAreaId) query.workAreaId = filters.workAreaId
  if (filters.jobId) query.jobId = filters.jobId
  if (filters.status) query.status = filters.status
  if (filters.q.trim()) query.q = filters.q.trim()
  if (offset > 0) query.offset = offset
  return query as Partial<PlanQuery>
}

export function queryString(query: Record<string, string | number | undefined>): string {
  const params = new URLSearchParams()
  for (const [k, v] of Object.entries(query)) if (v !== undefined && v !== '') params.set(k, String(v))
  const text = params.toString()
  return text ? `?${text}` : ''
}

/** "Learners 51–100 of 480" for a page of the matrix. */
export function pageWords(page: { offset: number, limit: number, matching: number }, shown: number): string {
  if (page.matching === 0) return 'No learners match'
  return `Learners ${page.offset + 1}–${page.offset + shown} of ${page.matching}`
}
