// British English dates and times written out by hand, for the screens a coach opens at the
// workstation (Today, the lesson runner, sync and records). A page's first Intl object — date,
// number or collation — loads the browser's locale data: about 40 ms of main thread on a desktop
// CPU, four times that on a slow tablet, in the middle of the screen opening. These are a few
// fixed forms, so they are spelt out here; tests/unit/date-words.test.ts checks every month and
// every hour against Node's ICU (CLDR's en-GB data). Forms with a weekday stay with Intl
// (lazyDateFormat in breakdown-words.ts), off the screens that open first.
// Dates are read in the device's own time zone, as Intl does by default.

/** CLDR's en-GB abbreviations; September is "Sept" there. */
const SHORT_MONTHS = ['Jan', 'Feb', 'Mar', 'Apr', 'May', 'Jun', 'Jul', 'Aug', 'Sept', 'Oct', 'Nov', 'Dec'] as const
const LONG_MONTHS = ['January', 'February', 'March', 'April', 'May', 'June', 'July', 'August', 'September', 'October', 'November', 'December'] as const

const twoDigits = (n: number) => String(n).padStart(2, '0')

/** "3 Dec 2026" (Intl's en-GB `dateStyle: 'medium'`). */
export function shortDate(at: Date): string {
  return `${at.getDate()} ${SHORT_MONTHS[at.getMonth()]} ${at.getFullYear()}`
}

/** "14:05" (Intl's en-GB `hour: '2-digit', minute: '2-digit'`, the same as `timeStyle: 'short'`). */
export function clockTime(at: Date): string {
  return `${twoDigits(at.getHours())}:${twoDigits(at.getMinutes())}`
}

/** "3 December", or "3 December 2025" with the year (Intl's en-GB `day: 'numeric', month: 'long'`). */
export function longDate(at: Date, withYear: boolean): string {
  return `${at.getDate()} ${LONG_MONTHS[at.getMonth()]}${withYear ? ` ${at.getFullYear()}` : ''}`
}

export function sameDay(a: Date, b: Date): boolean {
  return a.getFullYear() === b.getFullYear() && a.getMonth() === b.getMonth() && a.getDate() === b.getDate()
}
