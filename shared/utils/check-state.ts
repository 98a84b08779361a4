// Replays a spot check's marks against its elements (DESIGN.md §8): the mark in effect for each
// element, the outcome, the next taper step and date. The tablet shows these live and offline;
// the server computes the same at sync and stores them on the spot_checks row.
import type { BreakdownContent } from '../schemas/breakdown'
import { elementsById, type CheckElement } from './check-elements'
import { effectiveEvents, isMarkValue, type LessonEvent } from './lesson-events'
import type { MarkValue } from './scoring'
import { checkOutcome, nextCheckDate, nextIntervalIndex, SPOT_CHECK_INTERVAL_DAYS, type CheckOutcome } from './spot-check-schedule'

export const CHECK_EVENT_KINDS = ['mark', 'undo'] as const

/** One mark or undo of a check, as stored on both sides. */
export interface CheckEvent {
  id: string
  checkId: string
  elementId: string | null
  kind: (typeof CHECK_EVENT_KINDS)[number]
  value: string | null
  clientTime: number
  deviceId: string
  seq: number
}

export interface CheckState {
  /** The mark in effect for each chosen element that has one. */
  marks: Map<string, MarkValue>
  /** The newest mark still in effect (what Undo takes back), or null. */
  lastMarkId: string | null
  /** The first chosen element without a mark, -1 when all are marked. */
  firstUnmarked: number
}

/** The check's events in the one agreed order, undo applied (the same rule as a lesson's events). */
function liveEvents(events: readonly CheckEvent[], until: number | null): CheckEvent[] {
  // effectiveEvents reads only id, kind, value, clientTime, deviceId and seq.
  const asLesson = events.filter(e => until === null || e.clientTime <= until).map(e => ({ ...e, lessonId: e.checkId, pass: '' }) as LessonEvent & { checkId: string })
  return effectiveEvents(asLesson).map(e => ({ id: e.id, checkId: e.lessonId, elementId: e.elementId, kind: e.kind as CheckEvent['kind'], value: e.value, clientTime: e.clientTime, deviceId: e.deviceId, seq: e.seq }))
}

/**
 * The marks in effect. Once a check is finished, marks made after `finishedAt` do not count: a
 * finished check is closed, whatever arrives later (the rows stay append-only).
 */
export function replayCheck(events: readonly CheckEvent[], elements: readonly string[], finishedAt: number | null = null): CheckState {
  const chosen = new Set(elements)
  const marks = new Map<string, MarkValue>()
  let lastMarkId: string | null = null
  for (const e of liveEvents(events, finishedAt)) {
    if (e.kind !== 'mark' || !e.elementId || !chosen.has(e.elementId) || !isMarkValue(e.value)) continue
    marks.set(e.elementId, e.value)
    lastMarkId = e.id
  }
  return { marks, lastMarkId, firstUnmarked: elements.findIndex(id => !marks.has(id)) }
}

export interface CheckResult {
  outcome: CheckOutcome
  nextIntervalIndex: number
  nextDueAt: number
  missed: CheckElement[]
  cued: CheckElement[]
  /** Elements left unmarked at the finish (they count as missed). */
  unmarked: CheckElement[]
}

/**
 * The outcome of a finished check: an element left unmarked counts as missed; a safety key point
 * (or its reason) carries the safety flag. The next check follows the taper from `finishedAt`.
 */
export function checkResult(check: { elements: readonly string[], intervalIndex: number, finishedAt: number }, events: readonly CheckEvent[], content: BreakdownContent): CheckResult {
  const byId = elementsById(content)
  const { marks } = replayCheck(events, check.elements, check.finishedAt)
  const known = check.elements.map(id => byId.get(id)).filter((e): e is CheckElement => Boolean(e))
  const valueOf = (e: CheckElement): MarkValue => marks.get(e.id) ?? 'missed'
  const outcome = checkOutcome(known.map(e => ({ value: valueOf(e), safety: e.safety })))
  const next = nextIntervalIndex(check.intervalIndex, outcome)
  return {
    outcome,
    nextIntervalIndex: next,
    nextDueAt: nextCheckDate(new Date(check.finishedAt), next).getTime(),
    missed: known.filter(e => valueOf(e) === 'missed'),
    cued: known.filter(e => marks.get(e.id) === 'cued'),
    unmarked: known.filter(e => !marks.has(e.id)),
  }
}

export const OUTCOME_LABELS: Record<CheckOutcome, string> = {
  clean: 'Clean',
  stay: 'Keep the same gap',
  reteach: 'Re-teach',
}

function days(n: number) {
  return `${n} ${n === 1 ? 'day' : 'days'}`
}

/** The outcome and why, in a coach's words. */
export function outcomeWords(result: Pick<CheckResult, 'outcome' | 'nextIntervalIndex' | 'missed' | 'cued' | 'unmarked'>): { title: string, why: string } {
  const gap = days(SPOT_CHECK_INTERVAL_DAYS[result.nextIntervalIndex] ?? 1)
  if (result.outcome === 'clean') return { title: 'Clean: every element done unaided', why: `The next check moves one step out on the taper, ${gap} from now.` }
  if (result.outcome === 'reteach') {
    const safety = result.missed.filter(e => e.safety)
    const because = safety.length
      ? `a safety key point was missed (${safety.map(e => e.keyPointText ?? e.text).join('; ')})`
      : `${result.missed.length} elements were missed`
    const unmarked = result.unmarked.length ? ` ${result.unmarked.length} left unmarked counted as missed.` : ''
    return { title: 'Re-teach this job', why: `Re-teach because ${because}.${unmarked}` }
  }
  const notes = [result.cued.length ? `${result.cued.length} needed a prompt` : '', result.missed.length ? `${result.missed.length} missed` : ''].filter(Boolean).join(', ')
  return { title: 'Stay on the same gap', why: `Not clean (${notes || 'not every element unaided'}), but no safety key point was missed and fewer than two misses, so the gap stays at ${gap}.` }
}
