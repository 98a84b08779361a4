// The follow-up taper (DESIGN.md §8): checks 1, 2, 4, 7, 14, 30, then 60 days after the last one.
// The Job Instruction card's step 4 says to check frequently and taper off (from memory of the card);
// these intervals are Fourfold's own.
import type { MarkValue } from './scoring'

export const SPOT_CHECK_INTERVAL_DAYS = [1, 2, 4, 7, 14, 30, 60] as const

export type CheckOutcome = 'clean' | 'stay' | 'reteach'

export interface CheckedElement { value: MarkValue, safety: boolean }

/**
 * Clean: every element unaided. Re-teach: a missed safety key point, or two or more misses.
 * Anything else (a cue, a single miss that is not safety) keeps the interval.
 */
export function checkOutcome(elements: readonly CheckedElement[]): CheckOutcome {
  const misses = elements.filter(e => e.value === 'missed')
  if (misses.some(e => e.safety) || misses.length >= 2) return 'reteach'
  return elements.every(e => e.value === 'unaided') ? 'clean' : 'stay'
}

/** Index into SPOT_CHECK_INTERVAL_DAYS for the next check. */
export function nextIntervalIndex(current: number, outcome: CheckOutcome): number {
  const last = SPOT_CHECK_INTERVAL_DAYS.length - 1
  const index = Math.min(Math.max(0, current), last)
  if (outcome === 'reteach') return 0
  if (outcome === 'clean') return Math.min(index + 1, last)
  return index
}

/** The date of the next check, `days` calendar days after `from` (local date arithmetic). */
export function addDays(from: Date, days: number): Date {
  const d = new Date(from.getTime())
  d.setDate(d.getDate() + days)
  return d
}

export function nextCheckDate(lastCheck: Date, intervalIndex: number): Date {
  return addDays(lastCheck, SPOT_CHECK_INTERVAL_DAYS[Math.min(Math.max(0, intervalIndex), SPOT_CHECK_INTERVAL_DAYS.length - 1)]!)
}

/** After the lesson's sign-off, the first check comes after the first interval. */
export function firstCheckDate(signedOffAt: Date): Date {
  return nextCheckDate(signedOffAt, 0)
}
