// The one derived training state of a learner × job (DESIGN.md §8): never stored, always worked
// out from the plan item, the signed-off lessons and the finished spot checks, so the plan, Today,
// the people pages and the reminder digest all say the same thing. Pure: the server and the tablet
// run it alike.
import type { CellStatus, PlanReason } from '../types/plan'
import { firstCheckDate } from './spot-check-schedule'

export interface TrainingFacts {
  planItem: { id: string, targetDate: string | null, reason: PlanReason, note: string } | null
  /** newest published version of the job, null if none */
  current: { id: string, number: number } | null
  /** signed-off lessons of this learner on this job (any order) */
  lessons: Array<{ id: string, versionId: string, versionNumber: number, signedOffAt: number, decision: 'ready' | 'another-pass' | null, focus: string[] | null }>
  /** true when a lesson was started but not signed off */
  lessonInProgress: boolean
  /** finished spot checks of this learner on this job (any order) */
  checks: Array<{ id: string, finishedAt: number, outcome: 'clean' | 'stay' | 'reteach', nextIntervalIndex: number, nextDueAt: number }>
}

export interface TrainingCell {
  status: CellStatus
  /** words for the cell, e.g. "Ready since 3 Nov", "Check due 12 Dec", "Re-teach: version 3 published" */
  words: string
  trainedVersionId: string | null
  trainedVersionNumber: number | null
  /** sign-off time of the lesson that made them ready (ms) */
  readySince: number | null
  /** when the next spot check is due (ms), null if not ready */
  nextCheckAt: number | null
  /** taper step for that next check (index into SPOT_CHECK_INTERVAL_DAYS) */
  nextIntervalIndex: number
  reteachBecause: 'failed-check' | 'new-version' | null
  /** when the failed check that asks for re-teaching was finished (ms) */
  failedCheckAt: number | null
  /** plan target date passed and not ready */
  late: boolean
  /** nextCheckAt < start of today */
  overdueCheck: boolean
}

/** Local calendar date of an instant as YYYY-MM-DD (plan target dates are local calendar dates). */
export function localDay(at: number): string {
  const d = new Date(at)
  return `${d.getFullYear()}-${String(d.getMonth() + 1).padStart(2, '0')}-${String(d.getDate()).padStart(2, '0')}`
}

export function startOfDay(at: number): number {
  const d = new Date(at)
  d.setHours(0, 0, 0, 0)
  return d.getTime()
}

/** The last millisecond of the local day holding `at`. */
export function endOfDay(at: number): number {
  const d = new Date(at)
  d.setHours(24, 0, 0, 0)
  return d.getTime() - 1
}

/** Today as the rule needs it; work it out once for many cells at the same `now`. */
export interface DayBounds { today: string, start: number, end: number }
export function dayBounds(now: number): DayBounds {
  return { today: localDay(now), start: startOfDay(now), end: endOfDay(now) }
}

/** A YYYY-MM-DD date as local midnight (ms). */
export function dayStart(day: string): number {
  const [y, m, d] = day.split('-').map(Number)
  return new Date(y!, m! - 1, d!).getTime()
}

// Month names written out rather than Intl.DateTimeFormat: the same on every runtime (ICU versions
// differ, e.g. "Sep" or "Sept"), and several times cheaper for the thousands of cells of a plan.
const MONTHS = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sep', 'Oct', 'Nov', 'Dec'] as const

function dayMonthYear(day: number, monthIndex: number, year: number, nowYear: number): string {
  return year === nowYear ? `${day} ${MONTHS[monthIndex]}` : `${day} ${MONTHS[monthIndex]} ${year}`
}

/** "3 Nov", or "3 Nov 2025" when the date is in another year than `now` (local time). */
export function shortDate(at: number, now: number): string {
  const d = new Date(at)
  return dayMonthYear(d.getDate(), d.getMonth(), d.getFullYear(), new Date(now).getFullYear())
}

/** The same for a YYYY-MM-DD calendar date, read from its digits. */
export function shortDay(day: string, now: number): string {
  return dayMonthYear(Number(day.slice(8, 10)), Number(day.slice(5, 7)) - 1, Number(day.slice(0, 4)), new Date(now).getFullYear())
}

export const CELL_STATUS_WORDS: Record<CellStatus, string> = {
  'not-needed': 'Not needed',
  'planned': 'Planned',
  'in-training': 'In training',
  'ready': 'Ready',
  'check-due': 'Spot check due',
  'reteach': 'Re-teach',
  'late': 'Late',
}

/** People who may work the job alone today: ready, with or without a spot check due. */
export function isReadyNow(status: CellStatus): boolean {
  return status === 'ready' || status === 'check-due'
}

type CellCore = Omit<TrainingCell, 'words'>

/** The words a cell shows: its status first, then the one date or reason that matters. */
export function cellWords(cell: CellCore, planItem: TrainingFacts['planItem'], currentVersionNumber: number | null, now: number): string {
  const target = planItem?.targetDate ? shortDay(planItem.targetDate, now) : null
  switch (cell.status) {
    case 'reteach':
      if (cell.reteachBecause === 'failed-check') return `Re-teach: spot check failed ${shortDate(cell.failedCheckAt!, now)}`
      return `Re-teach: version ${currentVersionNumber} published`
    case 'check-due':
      return cell.overdueCheck
        ? `Spot check overdue since ${shortDate(cell.nextCheckAt!, now)}`
        : `Spot check due ${shortDate(cell.nextCheckAt!, now)}`
    case 'ready':
      return `Ready since ${shortDate(cell.readySince!, now)}`
    case 'late':
      return `Late: planned by ${target}`
    case 'in-training':
      return target ? `In training, planned by ${target}` : 'In training'
    case 'planned':
      return target ? `Planned by ${target}` : 'Planned, no date set'
    case 'not-needed':
      return 'Not needed'
  }
}

/**
 * The cell's state at `now`. The latest signed-off lesson decides readiness: when its decision is
 * 'ready' the learner is ready since its sign-off, on its version (a refresher — focus not null —
 * on the current version so brings them up to that version); any other decision means in training.
 * Precedence: reteach > check-due > ready > late > in-training > planned > not-needed.
 */
export function trainingCell(facts: TrainingFacts, now: number, day: DayBounds = dayBounds(now)): TrainingCell {
  let latestLesson: TrainingFacts['lessons'][number] | null = null
  for (const l of facts.lessons) if (!latestLesson || l.signedOffAt > latestLesson.signedOffAt || (l.signedOffAt === latestLesson.signedOffAt && l.id > latestLesson.id)) latestLesson = l
  const readyLesson = latestLesson?.decision === 'ready' ? latestLesson : null

  let readySince: number | null = null
  let trainedVersionId: string | null = null
  let trainedVersionNumber: number | null = null
  let nextCheckAt: number | null = null
  let nextIndex = 0
  let reteachBecause: TrainingCell['reteachBecause'] = null
  let failedCheckAt: number | null = null

  if (readyLesson) {
    readySince = readyLesson.signedOffAt
    trainedVersionId = readyLesson.versionId
    trainedVersionNumber = readyLesson.versionNumber
    // Only checks after the sign-off count: a re-teach starts the taper again.
    let lastCheck: TrainingFacts['checks'][number] | undefined
    for (const c of facts.checks) {
      if (c.finishedAt <= readyLesson.signedOffAt) continue
      if (!lastCheck || c.finishedAt > lastCheck.finishedAt || (c.finishedAt === lastCheck.finishedAt && c.id > lastCheck.id)) lastCheck = c
    }
    if (lastCheck?.outcome === 'reteach') {
      reteachBecause = 'failed-check'
      failedCheckAt = lastCheck.finishedAt
    }
    else if (facts.current && facts.current.number > readyLesson.versionNumber) {
      reteachBecause = 'new-version'
    }
    else if (lastCheck) {
      nextCheckAt = lastCheck.nextDueAt
      nextIndex = lastCheck.nextIntervalIndex
    }
    else {
      nextCheckAt = firstCheckDate(new Date(readySince)).getTime()
      nextIndex = 0
    }
  }

  const ready = readyLesson !== null && reteachBecause === null
  const targetDate = facts.planItem?.targetDate ?? null
  const late = !ready && targetDate !== null && targetDate < day.today
  const overdueCheck = nextCheckAt !== null && nextCheckAt < day.start

  let status: CellStatus
  if (reteachBecause) status = 'reteach'
  else if (ready && nextCheckAt !== null && nextCheckAt <= day.end) status = 'check-due'
  else if (ready) status = 'ready'
  else if (late) status = 'late'
  else if (facts.lessons.length > 0 || facts.lessonInProgress) status = 'in-training'
  else if (facts.planItem) status = 'planned'
  else status = 'not-needed'

  const core: CellCore = {
    status,
    trainedVersionId,
    trainedVersionNumber,
    readySince,
    nextCheckAt,
    nextIntervalIndex: nextIndex,
    reteachBecause,
    failedCheckAt,
    late,
    overdueCheck,
  }
  return { ...core, words: cellWords(core, facts.planItem, facts.current?.number ?? null, now) }
}
