// What the people and study routes answer (GET /api/learners/training, GET /api/learners/[id]/history,
// GET /api/me/training). Times are milliseconds since the epoch; a plan target date is YYYY-MM-DD.
import type { BreakdownContent } from '../schemas/breakdown'
import type { CellStatus } from './plan'

/** One learner × job pair as the training state rule derives it (shared/utils/training-status.ts), with the job's title. */
export interface PersonJobState {
  jobId: string
  jobTitle: string
  status: CellStatus
  /** The rule's own words for the state, e.g. "Ready since 3 Nov", "Re-teach: version 3 published". */
  words: string
  trainedVersionNumber: number | null
  currentVersionNumber: number | null
  readySince: number | null
  nextCheckAt: number | null
  reteachBecause: 'failed-check' | 'new-version' | null
  failedCheckAt: number | null
  late: boolean
  overdueCheck: boolean
  targetDate: string | null
  lastLessonId: string | null
  lastCheckId: string | null
}

export interface HistoryLesson {
  id: string
  jobId: string
  jobTitle: string
  versionId: string
  versionNumber: number
  coachName: string | null
  startedAt: number
  signedOffAt: number | null
  decision: 'ready' | 'another-pass' | null
  /** The server's recall score (0–100); null before any try-out marks reached it. */
  recall: number | null
  readiness: 'ready' | 'another-pass' | null
  /** A refresher: only the elements that changed in a new version were taught. */
  refresher: boolean
}

export interface HistoryCheck {
  id: string
  jobId: string
  jobTitle: string
  versionNumber: number
  coachName: string | null
  startedAt: number
  finishedAt: number | null
  outcome: 'clean' | 'stay' | 'reteach' | null
  nextDueAt: number | null
}

export interface LearnerHistory {
  learner: { id: string, name: string, reference: string, workAreaName: string | null, hasAccount: boolean, archivedAt: number | null }
  /** Oldest first. */
  lessons: HistoryLesson[]
  /** Oldest first. */
  checks: HistoryCheck[]
  jobs: PersonJobState[]
}

/** One roster learner's training at a glance (counts of their jobs by state). */
export interface RosterTraining {
  learnerId: string
  ready: number
  checksDue: number
  overdueChecks: number
  reteach: number
  late: number
  inTraining: number
  planned: number
  /** The soonest spot check due, if any. */
  nextCheckAt: number | null
}

/** A breakdown a learner was taught, to study read-only (the version of their latest signed-off lesson on the job). */
export interface StudyCard {
  versionId: string
  versionNumber: number
  jobId: string
  jobTitle: string
  job: {
    purpose: string
    hazards: Array<{ category: string, description: string }>
    ppe: string[]
    toolsAndMaterials: string[]
    workplaceArrangement: string
    workAreaName: string | null
  }
  content: BreakdownContent
  /** Sign-off time of the lesson that taught this version. */
  taughtAt: number
  lessonId: string
  /** The job's published version when it is newer than the one taught (the learner has not been taught it yet). */
  newer: { number: number, publishedAt: number | null } | null
}

export interface MyTraining {
  learner: { id: string, name: string }
  cards: StudyCard[]
  lessons: HistoryLesson[]
  checks: HistoryCheck[]
  jobs: PersonJobState[]
}
