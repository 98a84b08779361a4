// The query of GET /api/records and GET /api/records.csv (DESIGN.md §4 "Records"): filters,
// sorting and paging, used by the Records page and checked by the routes.
import { z } from 'zod'

export const RECORD_KINDS = ['lesson', 'check'] as const
export type RecordKind = (typeof RECORD_KINDS)[number]

/**
 * One outcome word per record: a signed-off lesson has the coach's decision (ready, another-pass),
 * a finished spot check its computed outcome (clean, stay, reteach); either is 'open' until then.
 */
export const RECORD_OUTCOMES = ['ready', 'another-pass', 'clean', 'stay', 'reteach', 'open'] as const
export type RecordOutcome = (typeof RECORD_OUTCOMES)[number]

export const RECORD_OUTCOME_WORDS: Record<RecordOutcome, string> = {
  'ready': 'Ready to work alone',
  'another-pass': 'Another pass',
  'clean': 'Check clean',
  'stay': 'Check: stay on this interval',
  'reteach': 'Check: re-teach',
  'open': 'Not finished',
}

export const RECORD_SORTS = ['date', 'person', 'job'] as const
export type RecordSort = (typeof RECORD_SORTS)[number]

export const RECORDS_PAGE_MAX = 200

// A form sends an empty field as "": that means no filter, not a bad value.
const blankIsMissing = (v: unknown) => (v === '' ? undefined : v)
const optional = <T extends z.ZodType>(schema: T) => z.preprocess(blankIsMissing, schema.optional())
const day = z.string().regex(/^\d{4}-\d{2}-\d{2}$/, 'Give the date as YYYY-MM-DD.').refine((s) => {
  const time = Date.parse(`${s}T00:00:00Z`)
  // Date.parse takes 2026-02-30 as 2 March; reading it back catches that.
  return Number.isFinite(time) && new Date(time).toISOString().startsWith(s)
}, 'That date does not exist.')

export const recordsFilterSchema = z.object({
  learnerId: optional(z.uuid('Choose a person from the list.')),
  jobId: optional(z.uuid('Choose a job from the list.')),
  coachUserId: optional(z.uuid('Choose a coach from the list.')),
  version: optional(z.coerce.number().int('A version is a whole number.').min(1, 'Versions start at 1.').max(1_000_000)),
  kind: optional(z.enum(RECORD_KINDS, 'Choose lessons or spot checks.')),
  outcome: optional(z.enum(RECORD_OUTCOMES, 'Choose an outcome from the list.')),
  from: optional(day),
  to: optional(day),
  // Minutes to add to local time to reach UTC (Date.prototype.getTimezoneOffset), so "from" and
  // "to" are the person's own calendar days.
  tzOffset: z.preprocess(blankIsMissing, z.coerce.number().int().min(-840, 'A time zone offset is at most 14 hours.').max(840, 'A time zone offset is at most 14 hours.').default(0)),
  sort: z.preprocess(blankIsMissing, z.enum(RECORD_SORTS, 'Sort by date, person or job.').default('date')),
  dir: z.preprocess(blankIsMissing, z.enum(['asc', 'desc'], 'The direction is asc or desc.').optional()),
}).refine(q => !q.from || !q.to || q.from <= q.to, { message: 'The "from" date must not be after the "to" date.', path: ['to'] })

export const recordsPageSchema = z.object({
  limit: z.preprocess(blankIsMissing, z.coerce.number().int().min(1, 'Ask for at least one record.').max(RECORDS_PAGE_MAX, `Ask for at most ${RECORDS_PAGE_MAX} records at a time.`).default(50)),
  offset: z.preprocess(blankIsMissing, z.coerce.number().int().min(0, 'The offset cannot be negative.').max(10_000_000).default(0)),
})

export type RecordsFilter = z.output<typeof recordsFilterSchema>

/** The filters as the Records page's fields hold them ('' = no filter). */
export interface RecordsFilterValues { learnerId: string, jobId: string, coachUserId: string, version: string, kind: string, outcome: string, from: string, to: string }

/** One row of GET /api/records (times in ms since the epoch, UTC). */
export interface RecordRow {
  kind: RecordKind
  id: string
  /** When the lesson or check started: the training date. */
  date: number
  /** Lesson signed off / check finished: the evaluation date. */
  finishedAt: number | null
  learnerId: string
  learnerName: string
  learnerReference: string
  workAreaName: string | null
  jobId: string
  jobTitle: string
  versionId: string
  versionNumber: number
  coachUserId: string | null
  coachName: string | null
  outcome: RecordOutcome
  /** Lessons: Fourfold's suggestion and the recall score the server computed. */
  readiness: 'ready' | 'another-pass' | null
  recall: number | null
  /** Lessons: the learner's acknowledgement. */
  acknowledgedBy: string | null
  acknowledgedAt: number | null
  place: string
  /** Spot checks: how many elements were checked. */
  elements: number | null
}

export interface RecordsPage { total: number, limit: number, offset: number, rows: RecordRow[] }
