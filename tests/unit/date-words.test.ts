// The hand-written en-GB dates (app/utils/date-words.ts) against Intl.DateTimeFormat in Node, whose
// ICU carries CLDR's en-GB data (the Unicode Common Locale Data Repository): a reference outside
// the project. Every month and every hour of a year is checked, local times in the machine's zone.
import { describe, expect, it } from 'vitest'
import { clockTime, longDate, sameDay, shortDate } from '../../app/utils/date-words'
import { formatDate, formatDateTime, formatTime } from '../../app/utils/breakdown-words'
import { whenInWords } from '../../app/utils/offline'

const icu = (options: Intl.DateTimeFormatOptions) => new Intl.DateTimeFormat('en-GB', options)

/** One local time in each month, and each hour with a minute that needs a leading zero. */
const moments = [
  ...Array.from({ length: 12 }, (_, month) => new Date(2026, month, month + 9, 9, 5)),
  ...Array.from({ length: 24 }, (_, hour) => new Date(2025, 6, 1, hour, hour * 2)),
  new Date(2027, 0, 1, 0, 0),
  new Date(2026, 11, 31, 23, 59),
]

describe('British English dates written by hand', () => {
  it('match ICU\'s en-GB medium date, short time and both together', () => {
    for (const at of moments) {
      expect(shortDate(at)).toBe(icu({ dateStyle: 'medium' }).format(at))
      expect(clockTime(at)).toBe(icu({ hour: '2-digit', minute: '2-digit' }).format(at))
      expect(clockTime(at)).toBe(icu({ timeStyle: 'short' }).format(at))
      expect(formatDate(at)).toBe(icu({ dateStyle: 'medium' }).format(at))
      expect(formatDateTime(at)).toBe(icu({ dateStyle: 'medium', timeStyle: 'short' }).format(at))
      expect(formatTime(at.getTime())).toBe(icu({ hour: '2-digit', minute: '2-digit' }).format(at))
    }
  })

  it('match ICU\'s en-GB day and long month, with and without the year', () => {
    for (const at of moments) {
      expect(longDate(at, false)).toBe(icu({ day: 'numeric', month: 'long' }).format(at))
      expect(longDate(at, true)).toBe(icu({ day: 'numeric', month: 'long', year: 'numeric' }).format(at))
    }
  })

  it('say "Sept", as CLDR\'s en-GB data has it since version 38 (from memory)', () => {
    expect(shortDate(new Date(2026, 8, 14, 12))).toBe('14 Sept 2026')
  })

  it('tell the same calendar day on the tablet\'s clock', () => {
    expect(sameDay(new Date(2026, 2, 3, 0, 0), new Date(2026, 2, 3, 23, 59))).toBe(true)
    expect(sameDay(new Date(2026, 2, 3, 23, 59), new Date(2026, 2, 4, 0, 0))).toBe(false)
    expect(sameDay(new Date(2025, 2, 3, 12), new Date(2026, 2, 3, 12))).toBe(false)
  })

  it('write "when" as ICU would: the time today, day and month this year, the year otherwise', () => {
    const now = new Date(2026, 5, 15, 18, 0).getTime()
    for (const at of moments) {
      const time = icu({ hour: '2-digit', minute: '2-digit' }).format(at)
      const expected = sameDay(at, new Date(now))
        ? time
        : `${icu({ day: 'numeric', month: 'long', ...(at.getFullYear() === 2026 ? {} : { year: 'numeric' }) }).format(at)}, ${time}`
      expect(whenInWords(at.getTime(), now)).toBe(expected)
    }
    expect(whenInWords(new Date(2026, 5, 15, 7, 3).getTime(), now)).toBe('07:03')
  })
})
