// Due and target dates in words, on the tablet's own calendar days.
import { describe, expect, it } from 'vitest'
import { calendarDaysFrom, dueWords, isLate, targetWords } from '../../app/utils/check-words'

const now = new Date(2026, 5, 10, 15, 30).getTime()
const at = (day: number, hour = 9) => new Date(2026, 5, day, hour).getTime()

describe('due words', () => {
  it('counts calendar days, not 24-hour spans', () => {
    expect(calendarDaysFrom(now, at(9, 23))).toBe(-1)
    expect(calendarDaysFrom(now, at(11, 1))).toBe(1)
  })
  it('says how late or how soon', () => {
    expect(dueWords(at(7), now)).toBe('3 days late')
    expect(dueWords(at(9), now)).toBe('1 day late')
    expect(dueWords(at(10, 23), now)).toBe('due today')
    expect(dueWords(at(11), now)).toBe('due tomorrow')
    expect(dueWords(at(15), now)).toBe('due in 5 days')
    expect(isLate(at(10, 1), now)).toBe(false)
    expect(isLate(at(9), now)).toBe(true)
  })
  it('reads plan target dates', () => {
    expect(targetWords('2026-06-08', now)).toEqual({ late: true, near: false, words: '2 days past the target date' })
    expect(targetWords('2026-06-10', now)).toMatchObject({ late: false, near: true })
    expect(targetWords('2026-06-20', now)).toMatchObject({ near: true, words: 'target date in 10 days' })
    expect(targetWords('2026-08-20', now).near).toBe(false)
  })
})
