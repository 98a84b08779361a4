// Agreement between two coaches who marked the same try-out (issue 6, item 9): the lesson's own
// coach records 'mark' events, a second coach records 'observer-mark' events on their tablet.
// Each element of each try-out pass marked by both is one pair; Cohen's kappa says how much they
// agree beyond what chance alone would give.
import type { BreakdownContent } from '../schemas/breakdown'
import { effectiveEvents, isMarkValue, parsePassKey, type LessonEvent } from './lesson-events'
import { elementsOf, passElementIds, replayLesson } from './lesson-state'
import { MARK_VALUES, type MarkValue } from './scoring'

export interface Agreement {
  /** Cohen's kappa; null when it is not defined (no pairs, or chance agreement is already 1). */
  kappa: number | null
  /** p_o: share of items both raters put in the same category. */
  observed: number | null
  /** p_e: agreement expected by chance from each rater's own category shares. */
  expected: number | null
  /** Items rated by both. */
  n: number
}

/**
 * Cohen (1960), "A coefficient of agreement for nominal scales": κ = (p_o − p_e) / (1 − p_e),
 * where p_o = Σ n_ii / N and p_e = Σ (row_i / N)(col_i / N). `confusion[i][j]` counts the items
 * rater A put in category i and rater B in category j; the table must be square.
 */
export function cohenKappa(confusion: ReadonlyArray<ReadonlyArray<number>>): Agreement {
  const k = confusion.length
  if (confusion.some(row => row.length !== k)) throw new Error('A confusion table must be square: one row and one column per category.')
  if (confusion.some(row => row.some(c => !Number.isFinite(c) || c < 0))) throw new Error('Confusion counts must be finite and not negative.')
  const n = confusion.reduce((sum, row) => sum + row.reduce((a, b) => a + b, 0), 0)
  if (n === 0) return { kappa: null, observed: null, expected: null, n: 0 }
  let agreed = 0
  let expected = 0
  for (let i = 0; i < k; i++) {
    agreed += confusion[i]![i]!
    const row = confusion[i]!.reduce((a, b) => a + b, 0)
    const col = confusion.reduce((sum, r) => sum + r[i]!, 0)
    expected += (row / n) * (col / n)
  }
  const observed = agreed / n
  // Both raters used one and the same category for everything: chance already explains it all,
  // and the formula is 0 / 0.
  if (Math.abs(1 - expected) < 1e-12) return { kappa: null, observed, expected, n }
  return { kappa: (observed - expected) / (1 - expected), observed, expected, n }
}

/** κ to two decimals, after dropping floating-point noise (0.375 computed as 0.37499… reads 0.38). */
export function kappaToTwoDecimals(kappa: number): number {
  return Math.round(Number((kappa * 100).toPrecision(12))) / 100
}

export type AgreementBand = 'poor' | 'slight' | 'fair' | 'moderate' | 'substantial' | 'almost perfect'

/**
 * Landis, J. R. & Koch, G. G. (1977), "The measurement of observer agreement for categorical data",
 * Biometrics 33(1):159–174, p. 165: < 0.00 poor, 0.00–0.20 slight, 0.21–0.40 fair,
 * 0.41–0.60 moderate, 0.61–0.80 substantial, 0.81–1.00 almost perfect. The bands are read on κ
 * rounded to two decimals, as the paper states them, so 0.4 (which floating point may hold as
 * 0.39999…) is "fair".
 */
export function agreementBand(kappa: number): AgreementBand {
  const k = kappaToTwoDecimals(kappa)
  if (k < 0) return 'poor'
  if (k <= 0.2) return 'slight'
  if (k <= 0.4) return 'fair'
  if (k <= 0.6) return 'moderate'
  if (k <= 0.8) return 'substantial'
  return 'almost perfect'
}

export interface ObserverAgreement extends Agreement {
  /** confusion[lesson mark][observer mark], in MARK_VALUES order (unaided, cued, missed). */
  confusion: number[][]
  /** Pass keys where the second coach marked at least one element. */
  observedPasses: string[]
}

/**
 * The latest effective 'observer-mark' of each element in each try-out pass (undo applies to them
 * as to any event). Marks for an element that is not part of the pass are ignored, as replayLesson
 * ignores such lesson marks.
 */
export function observerMarks(events: readonly LessonEvent[], content: BreakdownContent): Map<string, Map<string, MarkValue>> {
  const elements = elementsOf(content)
  const byPass = new Map<string, Map<string, MarkValue>>()
  for (const e of effectiveEvents(events)) {
    if (e.kind !== 'observer-mark' || !e.elementId || !isMarkValue(e.value)) continue
    const parsed = parsePassKey(e.pass)
    if (!parsed || !parsed.type.startsWith('T')) continue
    if (!passElementIds(parsed.type, elements).includes(e.elementId)) continue
    let marks = byPass.get(e.pass)
    if (!marks) byPass.set(e.pass, (marks = new Map()))
    marks.set(e.elementId, e.value)
  }
  return byPass
}

/**
 * The agreement of a lesson: every element of every try-out pass that both coaches marked is one
 * pair (latest effective lesson mark, latest effective observer mark). An element only one of them
 * marked is left out, not counted as missed: agreement is about what both saw.
 */
export function observerAgreement(events: readonly LessonEvent[], content: BreakdownContent): ObserverAgreement {
  const state = replayLesson(events, content)
  const observer = observerMarks(events, content)
  const index = new Map(MARK_VALUES.map((v, i) => [v, i]))
  const confusion = MARK_VALUES.map(() => MARK_VALUES.map(() => 0))
  for (const pass of state.passes) {
    const theirs = observer.get(pass.key)
    if (!theirs) continue
    for (const [elementId, lessonMark] of pass.marks) {
      const observerMark = theirs.get(elementId)
      if (observerMark) confusion[index.get(lessonMark)!]![index.get(observerMark)!]! += 1
    }
  }
  return { ...cohenKappa(confusion), confusion, observedPasses: [...observer.keys()].sort() }
}

/** "Agreement between the two coaches: κ = 0.40, fair (20 marks compared)." */
export function agreementWords(a: Agreement): string {
  if (a.n === 0) return 'The second coach has not marked any element the lesson\'s coach marked, so there is nothing to compare yet.'
  const marks = `${a.n} ${a.n === 1 ? 'mark' : 'marks'} compared`
  if (a.kappa === null) return `Agreement between the two coaches: κ cannot be worked out, because both gave every element the same one mark (${marks}; they agreed on ${Math.round((a.observed ?? 0) * 100)} %).`
  return `Agreement between the two coaches: κ = ${kappaToTwoDecimals(a.kappa).toFixed(2)}, ${agreementBand(a.kappa)} (${marks}; they gave the same mark ${Math.round((a.observed ?? 0) * 100)} % of the time, chance alone would give ${Math.round((a.expected ?? 0) * 100)} %).`
}
