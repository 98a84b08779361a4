import { describe, expect, it } from 'vitest'
import { MARK_WEIGHTS, passScore, recallScore, roundScore } from '../../shared/utils/scoring'
import { checkOutcome, firstCheckDate, nextCheckDate, nextIntervalIndex, SPOT_CHECK_INTERVAL_DAYS } from '../../shared/utils/spot-check-schedule'

describe('pass and recall scores (DESIGN.md §8)', () => {
  it('weighs unaided 1, cued 0.5, missed 0', () => {
    expect(MARK_WEIGHTS).toEqual({ unaided: 1, cued: 0.5, missed: 0 })
  })

  it('scores 100 × the mean mark, an unmarked element counting as missed', () => {
    const marks = new Map([['a', 'unaided'], ['b', 'cued']] as const)
    expect(passScore(['a', 'b', 'c', 'd'], marks)).toBe(100 * (1 + 0.5 + 0 + 0) / 4)
    expect(passScore(['a'], marks)).toBe(100)
    expect(passScore([], marks)).toBeNull()
  })

  it('takes the mean of the latest T2, T3 and T4 scores that exist', () => {
    expect(recallScore({ T2: 100, T3: 50, T4: 75 })).toBe(75)
    expect(recallScore({ T2: 80, T3: null, T4: null })).toBe(80)
    expect(recallScore({ T2: null, T3: null, T4: null })).toBeNull()
    expect(roundScore(200 / 3)).toBe(66.7)
  })
})

describe('spot-check taper', () => {
  it('runs 1, 2, 4, 7, 14, 30, then 60 days', () => {
    expect([...SPOT_CHECK_INTERVAL_DAYS]).toEqual([1, 2, 4, 7, 14, 30, 60])
  })

  it('moves up on a clean check, back to the start on a missed safety point or two misses, and stays otherwise', () => {
    const u = { value: 'unaided', safety: false } as const
    expect(checkOutcome([u, u, { value: 'unaided', safety: true }])).toBe('clean')
    expect(checkOutcome([u, { value: 'cued', safety: true }])).toBe('stay')
    expect(checkOutcome([u, { value: 'missed', safety: false }])).toBe('stay')
    expect(checkOutcome([{ value: 'missed', safety: false }, { value: 'missed', safety: false }])).toBe('reteach')
    expect(checkOutcome([u, { value: 'missed', safety: true }])).toBe('reteach')
    expect(nextIntervalIndex(2, 'clean')).toBe(3)
    expect(nextIntervalIndex(6, 'clean')).toBe(6)
    expect(nextIntervalIndex(4, 'stay')).toBe(4)
    expect(nextIntervalIndex(5, 'reteach')).toBe(0)
  })

  it('dates the next check by calendar days, across a month end', () => {
    const signedOff = new Date(2026, 10, 30, 14, 0)
    expect(firstCheckDate(signedOff)).toEqual(new Date(2026, 11, 1, 14, 0))
    expect(nextCheckDate(new Date(2026, 11, 20, 9, 0), 5)).toEqual(new Date(2027, 0, 19, 9, 0))
  })
})
