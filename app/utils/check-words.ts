// Spot checks in a coach's words: what an element is, how late a check is, the next date.
import { KEY_POINT_KIND_LABELS } from '#shared/types/breakdown'
import type { CheckElement } from '#shared/utils/check-elements'

const DAY = 86_400_000

function startOfDay(t: number) {
  const d = new Date(t)
  d.setHours(0, 0, 0, 0)
  return d.getTime()
}

/** Whole calendar days from `now` to `at` on the tablet's clock (negative: in the past). */
export function calendarDaysFrom(now: number, at: number): number {
  return Math.round((startOfDay(at) - startOfDay(now)) / DAY)
}

/** "3 days late", "1 day late", "due today", "due tomorrow", "due in 4 days". */
export function dueWords(dueAt: number, now: number): string {
  const days = calendarDaysFrom(now, dueAt)
  if (days < 0) return `${-days} ${days === -1 ? 'day' : 'days'} late`
  if (days === 0) return 'due today'
  if (days === 1) return 'due tomorrow'
  return `due in ${days} days`
}

export function isLate(dueAt: number, now: number): boolean {
  return calendarDaysFrom(now, dueAt) < 0
}

/** "Tuesday 12 May" (the year only when it is not this year). */
export function dayWords(at: number, now: number, locale = 'en-GB'): string {
  const sameYear = new Date(at).getFullYear() === new Date(now).getFullYear()
  return new Intl.DateTimeFormat(locale, { weekday: 'long', day: 'numeric', month: 'long', ...(sameYear ? {} : { year: 'numeric' }) }).format(at)
}

/** What the coach listens or looks for, in one line: "Step 2: Open the guard", "Safety key point 1.1: …". */
export function elementLabel(e: CheckElement): string {
  if (e.level === 'step') return `Step ${e.stepNumber}: ${e.text}`
  const kind = e.kind ? KEY_POINT_KIND_LABELS[e.kind] : ''
  if (e.level === 'keyPoint') return `${kind} key point of step ${e.stepNumber}: ${e.text}`
  return `Reason for the ${kind.toLowerCase()} key point "${e.keyPointText}": ${e.text}`
}

/** A plan item's target date (YYYY-MM-DD, the organisation's own days) against today. */
export function targetWords(targetDate: string, now: number): { late: boolean, near: boolean, words: string } {
  const [y, m, d] = targetDate.split('-').map(Number)
  const at = new Date(y!, (m ?? 1) - 1, d ?? 1).getTime()
  const days = calendarDaysFrom(now, at)
  if (days < 0) return { late: true, near: false, words: `${-days} ${days === -1 ? 'day' : 'days'} past the target date` }
  if (days === 0) return { late: false, near: true, words: 'target date today' }
  return { late: false, near: days <= 14, words: `target date in ${days} ${days === 1 ? 'day' : 'days'}` }
}
