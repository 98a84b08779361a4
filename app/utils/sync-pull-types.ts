// The answer of GET /api/sync?since= (server/utils/sync-pull.ts), as the tablet reads it.
import type { ServerScore } from './sync-client'
import type { PulledCheck } from './local-checks'
import type { OfflineDueCheck, OfflinePlanItem } from './localdb'

export interface PullAnswer {
  cursor: number
  more: boolean
  versions: Array<{ id: string }>
  removedVersions: string[]
  learners: Array<{ id: string }>
  removedLearners: string[]
  lessons: Array<{ id: string, score: ServerScore | null }>
  checks: PulledCheck[]
  planItems: OfflinePlanItem[]
  removedPlanItems: string[]
  /** Derived on the server (trainingRows); always the whole list. */
  dueChecks: OfflineDueCheck[]
}
