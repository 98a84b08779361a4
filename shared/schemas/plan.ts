// The plan (training timetable): one learner × job need with a target date and the reason it arose,
// and the filters of the plan matrix. Used by the plan dialog and by /api/plan routes.
import { z } from 'zod'
import { CELL_STATUSES, PLAN_REASONS } from '../types/plan'

/** A real calendar date written YYYY-MM-DD (2026-02-30 is refused). */
export function isCalendarDate(value: string): boolean {
  const match = /^(\d{4})-(\d{2})-(\d{2})$/.exec(value)
  if (!match) return false
  const [y, m, d] = [Number(match[1]), Number(match[2]), Number(match[3])]
  const date = new Date(Date.UTC(y, m - 1, d))
  return date.getUTCFullYear() === y && date.getUTCMonth() === m - 1 && date.getUTCDate() === d && y >= 2000 && y <= 2100
}

export const planItemSchema = z.object({
  targetDate: z.string({ error: 'Pick a target date, or choose "no date".' })
    .refine(isCalendarDate, 'Pick a real date between 2000 and 2100.')
    .nullable()
    .default(null),
  reason: z.enum(PLAN_REASONS, { error: 'Choose why this person needs the job.' }),
  note: z.string({ error: 'The note must be text.' }).trim().max(500, 'Keep the note under 500 characters.').default(''),
})
export type PlanItemInput = z.output<typeof planItemSchema>

/** Route params of one plan cell. */
export const planCellParamsSchema = z.object({
  learnerId: z.uuid('That learner id is not valid.'),
  jobId: z.uuid('That job id is not valid.'),
})

/** Learners per page of the matrix: a tablet shows 50 rows × all jobs comfortably; 500 would be 20,000 cells. */
export const PLAN_PAGE_SIZE = 50
export const PLAN_PAGE_MAX = 500

/** Filters of GET /api/plan and /api/plan.csv; all optional, all applied on the server. */
export const planQuerySchema = z.object({
  workAreaId: z.union([z.uuid(), z.literal('none')], { error: 'Choose a work area from the list.' }).optional(),
  jobId: z.uuid('Choose a job from the list.').optional(),
  status: z.enum(CELL_STATUSES, { error: 'Choose a status from the list.' }).optional(),
  q: z.string().trim().max(100, 'Keep the search under 100 characters.').optional(),
  /** A page of learners (rows); coverage always counts everyone. The CSV export takes every row. */
  offset: z.coerce.number({ error: 'offset is a whole number.' }).int('offset is a whole number.').min(0, 'offset is 0 or more.').max(1_000_000).default(0),
  limit: z.coerce.number({ error: 'limit is a whole number.' }).int('limit is a whole number.').min(1, 'limit is 1 or more.').max(PLAN_PAGE_MAX, `limit is at most ${PLAN_PAGE_MAX}.`).default(PLAN_PAGE_SIZE),
})
export type PlanQuery = z.output<typeof planQuerySchema>
export type PlanFilters = Omit<PlanQuery, 'offset' | 'limit'> & Partial<Pick<PlanQuery, 'offset' | 'limit'>>
