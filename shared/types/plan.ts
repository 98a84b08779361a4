// Why a training need arose (the plan's reason column) and the derived states of a plan cell.
export const PLAN_REASONS = ['turnover', 'absence-cover', 'new-job', 'changed-job', 'quality-or-safety', 'other'] as const
export type PlanReason = (typeof PLAN_REASONS)[number]

export const PLAN_REASON_LABELS: Record<PlanReason, string> = {
  'turnover': 'Someone left',
  'absence-cover': 'Cover for absence',
  'new-job': 'New job',
  'changed-job': 'The job changed',
  'quality-or-safety': 'Quality or safety problem',
  'other': 'Other',
}

/** A plan cell's state, derived from the plan item, lessons and spot checks (never stored). */
export const CELL_STATUSES = ['not-needed', 'planned', 'in-training', 'ready', 'check-due', 'reteach', 'late'] as const
export type CellStatus = (typeof CELL_STATUSES)[number]
