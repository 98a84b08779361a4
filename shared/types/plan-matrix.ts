// What GET /api/plan answers: the training timetable as a learners × jobs matrix.
import type { CellStatus, PlanReason } from './plan'
import type { JobCoverage, WorkAreaCoverage } from '../utils/coverage'

export interface PlanLearner { id: string, name: string, reference: string, workAreaId: string | null, workAreaName: string | null }
export interface PlanJob { id: string, title: string, workAreaId: string | null, workAreaName: string | null, coverageTarget: number, currentVersionNumber: number | null }

/** One cell that is not "not needed" (a missing cell is not needed and has no plan item). */
export interface PlanCell {
  learnerId: string
  jobId: string
  status: CellStatus
  words: string
  planItemId: string | null
  targetDate: string | null
  reason: PlanReason | null
  note: string
  late: boolean
  readySince: number | null
  nextCheckAt: number | null
  overdueCheck: boolean
  trainedVersionNumber: number | null
  reteachBecause: 'failed-check' | 'new-version' | null
}

export interface PlanMatrix {
  /** the server's calendar day the statuses were worked out for, YYYY-MM-DD */
  today: string
  learners: PlanLearner[]
  jobs: PlanJob[]
  cells: PlanCell[]
  coverage: {
    jobs: JobCoverage[]
    workAreas: Array<WorkAreaCoverage & { name: string }>
  }
  /** active learners and jobs before the filters */
  totals: { learners: number, jobs: number }
  /** this page of the learners that match the filters (matching: how many match in all) */
  page: { offset: number, limit: number, matching: number }
}
