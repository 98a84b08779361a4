// The answer of GET /api/jobs/[id]/retraining and GET /api/retraining: people trained on an older
// published version of a job than the current one, with what changed and what a refresher teaches.
import type { ChangeLine } from '../utils/refresher-changes'

/** A refresher covers at most this many elements (the sync schema's limit on a lesson's focus). */
export const MAX_FOCUS = 500

export interface RetrainingEntry {
  learnerId: string
  learnerName: string
  jobId: string
  jobTitle: string
  trainedVersion: { id: string, number: number }
  currentVersion: { id: string, number: number }
  /** Sign-off time (ms) of the lesson that made them ready on the older version. */
  readySince: number | null
  /** Everything that differs between the two versions, in words, in the current version's order. */
  changes: ChangeLine[]
  /**
   * Step and key point ids of the current version a refresher presents and tries out; null when a
   * refresher cannot stand in for a lesson (nothing added or changed, only removals; or more than
   * MAX_FOCUS elements) and the whole job is taught again.
   */
  focus: string[] | null
}

export interface JobRetraining {
  job: { id: string, title: string }
  current: { id: string, number: number } | null
  people: RetrainingEntry[]
}
