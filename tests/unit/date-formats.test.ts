// Dates on screen (app/utils/breakdown-words.ts): the formatters are made on first use, not when a
// page imports the words — the first Intl.DateTimeFormat of a page loads the browser's locale data
// (tens of milliseconds of main thread while the page starts) — and they still read as en-GB dates.
import { afterEach, describe, expect, it, vi } from 'vitest'

const RealDateTimeFormat = Intl.DateTimeFormat

/** Counts the formatters made, each still a real one. */
function countFormatters() {
  return vi.spyOn(Intl, 'DateTimeFormat').mockImplementation(function (...args: ConstructorParameters<typeof Intl.DateTimeFormat>) {
    return new RealDateTimeFormat(...args)
  } as unknown as typeof Intl.DateTimeFormat)
}

/** The words module afresh, so no formatter is left from another test. */
async function freshWords() {
  vi.resetModules()
  return import('../../app/utils/breakdown-words')
}

afterEach(() => {
  vi.restoreAllMocks()
})

describe('date formats', () => {
  it('makes no formatter at import, and one per format on first use', async () => {
    const made = countFormatters()
    const { lazyDateFormat } = await freshWords()
    expect(made).not.toHaveBeenCalled()
    const longDay = lazyDateFormat({ weekday: 'long', day: 'numeric', month: 'long' })
    const longMoment = lazyDateFormat({ day: 'numeric', month: 'long', hour: '2-digit', minute: '2-digit' })
    expect(made).not.toHaveBeenCalled()
    longDay(new Date(2026, 11, 3, 12))
    longDay(new Date(2026, 11, 4, 12))
    expect(made).toHaveBeenCalledTimes(1)
    longMoment(new Date(2026, 11, 3, 12))
    expect(made).toHaveBeenCalledTimes(2)
  })

  it('writes the short dates and times of the first screens without any Intl formatter', async () => {
    const made = countFormatters()
    const { formatDate, formatDateTime, formatTime } = await freshWords()
    expect(formatDate(new Date(2026, 11, 3, 12))).toBe('3 Dec 2026')
    expect(formatDateTime(new Date(2026, 11, 3, 12))).toBe('3 Dec 2026, 12:00')
    expect(formatTime(new Date(2026, 11, 3, 12))).toBe('12:00')
    expect(made).not.toHaveBeenCalled()
  })

  it('writes nothing for a date it cannot read', async () => {
    const { formatDate, formatDateTime, formatTime, lazyDateFormat } = await freshWords()
    expect(lazyDateFormat({ weekday: 'long' })('not a date')).toBe('')
    expect(formatDate('not a date')).toBe('')
    expect(formatDateTime(Number.NaN)).toBe('')
    expect(formatTime(null)).toBe('')
  })

  it('writes no date for a missing one, without making a formatter', async () => {
    const { lazyDateFormat } = await freshWords()
    const made = countFormatters()
    const format = lazyDateFormat({ dateStyle: 'medium' })
    expect(format(null)).toBe('')
    expect(format(undefined)).toBe('')
    expect(made).not.toHaveBeenCalled()
  })

  it('reads as British English dates and 24-hour times', async () => {
    const { formatDate, formatDateTime, formatTime } = await freshWords()
    // Local noon-ish times, so the calendar day is the same in every time zone the tests run in.
    const at = new Date(2026, 11, 3, 14, 5)
    // The en-GB forms are CLDR's (the Unicode Common Locale Data Repository, which Node's ICU
    // carries): "d MMM y" for the medium date, "HH:mm" for the short time, joined by ", ".
    // From memory of CLDR's en-GB data, not looked up; long forms with a weekday are left out, as
    // CLDR versions differ there (Node 20's ICU writes "Thursday, 3 December 2026").
    expect(formatDate(at)).toBe('3 Dec 2026')
    expect(formatDateTime(at)).toBe('3 Dec 2026, 14:05')
    expect(formatTime(at)).toBe('14:05')
    // An API date (ISO string or milliseconds) reads the same as the Date it stands for.
    expect(formatDate(at.toISOString())).toBe('3 Dec 2026')
    expect(formatDate(at.getTime())).toBe('3 Dec 2026')
  })
})
