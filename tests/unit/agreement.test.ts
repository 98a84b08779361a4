// Cohen's kappa between the lesson's coach and a second observer (issue 6, item 9).
import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { agreementBand, agreementWords, cohenKappa, observerAgreement, observerMarks } from '../../shared/utils/agreement'
import { replayLesson } from '../../shared/utils/lesson-state'
import type { LessonEvent } from '../../shared/utils/lesson-events'
import { kp, single, step } from '../fixtures/breakdowns'

describe('cohenKappa', () => {
  it('matches the worked example of 50 items rated 20 / 5 / 10 / 15', () => {
    // Source: the formula of Cohen, J. (1960), "A coefficient of agreement for nominal scales",
    // Educational and Psychological Measurement 20(1):37–46, κ = (p_o − p_e) / (1 − p_e), applied to
    // the worked example the issue names (both yes 20, A yes B no 5, A no B yes 10, both no 15):
    // p_o = 35/50 = 0.70, p_e = (25/50)(30/50) + (25/50)(20/50) = 0.50, κ = 0.40.
    const a = cohenKappa([[20, 5], [10, 15]])
    expect(a.n).toBe(50)
    expect(a.observed).toBeCloseTo(0.70, 12)
    expect(a.expected).toBeCloseTo(0.50, 12)
    expect(a.kappa).toBeCloseTo(0.40, 12)
  })

  it('matches a 3 × 3 table computed by hand from Cohen\'s formula', () => {
    // Hand-computed (not from a publication): N = 30, diagonal 10 + 8 + 3 = 21, so p_o = 0.70;
    // rows 13, 13, 4 and columns 13, 11, 6, so p_e = (13·13 + 13·11 + 4·6) / 30² = 336/900;
    // κ = (630 − 336) / (900 − 336) = 294/564 = 49/94 ≈ 0.5213.
    const a = cohenKappa([[10, 2, 1], [3, 8, 2], [0, 1, 3]])
    expect(a.n).toBe(30)
    expect(a.observed).toBeCloseTo(0.7, 12)
    expect(a.expected).toBeCloseTo(336 / 900, 12)
    expect(a.kappa).toBeCloseTo(49 / 94, 12)
  })

  it('is 1 whenever both raters give identical ratings using at least two categories', () => {
    fc.assert(fc.property(fc.array(fc.nat(40), { minLength: 2, maxLength: 5 }).filter(d => d.filter(x => x > 0).length >= 2), (diagonal) => {
      const table = diagonal.map((d, i) => diagonal.map((_, j) => (i === j ? d : 0)))
      expect(cohenKappa(table).kappa).toBeCloseTo(1, 12)
    }))
  })

  it('is undefined with no items, or when both used one category only', () => {
    expect(cohenKappa([[0, 0], [0, 0]])).toEqual({ kappa: null, observed: null, expected: null, n: 0 })
    const one = cohenKappa([[12, 0], [0, 0]])
    expect(one.kappa).toBeNull()
    expect(one.observed).toBe(1)
  })

  it('refuses a table that is not square or holds a negative count', () => {
    expect(() => cohenKappa([[1, 2], [3]])).toThrow(/square/)
    expect(() => cohenKappa([[1, -2], [3, 4]])).toThrow(/negative/)
  })
})

describe('agreementBand', () => {
  it('uses the bands of Landis & Koch (1977), Biometrics 33:159–174, p. 165', () => {
    expect(agreementBand(-0.1)).toBe('poor')
    expect(agreementBand(0)).toBe('slight')
    expect(agreementBand(0.2)).toBe('slight')
    expect(agreementBand(0.21)).toBe('fair')
    expect(agreementBand(0.4)).toBe('fair')
    expect(agreementBand(0.41)).toBe('moderate')
    expect(agreementBand(0.6)).toBe('moderate')
    expect(agreementBand(0.61)).toBe('substantial')
    expect(agreementBand(0.8)).toBe('substantial')
    expect(agreementBand(0.81)).toBe('almost perfect')
    expect(agreementBand(1)).toBe('almost perfect')
    // The worked example's κ, as floating point computes it, is read as 0.40.
    expect(agreementBand(cohenKappa([[20, 5], [10, 15]]).kappa!)).toBe('fair')
  })
})

const content = single([
  step('Stop and lock out slicer', [kp('safety', 'Own padlock on the isolator', 'Nobody can start it')]),
  step('Open the blade guard', [kp('knack', 'Lift both latches together', 'One latch jams it')]),
  step('Fit the new blade set', [kp('quality', 'Seat both pins', '')]),
])
const [s1, s2, s3] = content.units[0]!.steps
const [k1, k2, k3] = [s1!.keyPoints[0]!, s2!.keyPoints[0]!, s3!.keyPoints[0]!]

function recorder(deviceId: string, startTime = 1000) {
  const events: LessonEvent[] = []
  let seq = 0
  const add = (pass: string, kind: LessonEvent['kind'], elementId: string | null = null, value: string | null = null) => {
    seq += 1
    const e = { id: `${deviceId}-${seq}`, lessonId: 'L', pass, elementId, kind, value, clientTime: startTime + seq, deviceId, seq }
    events.push(e)
    return e
  }
  return { events, add }
}

describe('observer marks', () => {
  it('are ignored by replayLesson: scores and readiness stay those of the lesson\'s coach', () => {
    const coach = recorder('coach-tablet')
    for (const s of [s1, s2, s3]) coach.add('T1-1', 'mark', s!.id, 'unaided')
    coach.add('T2-1', 'order-all')
    for (const s of [s1, s2, s3]) coach.add('T2-1', 'mark', s!.id, 'unaided')
    for (const k of [k1, k2, k3]) coach.add('T3-1', 'mark', k.id, 'unaided')
    for (const k of [k1, k2]) coach.add('T4-1', 'mark', k.id, 'unaided')
    const alone = replayLesson(coach.events, content)
    const observer = recorder('observer-tablet', 1500)
    for (const s of [s1, s2, s3]) observer.add('T1-1', 'observer-mark', s!.id, 'missed')
    for (const k of [k1, k2, k3]) observer.add('T3-1', 'observer-mark', k.id, 'cued')
    // Even a pass only the observer marked does not appear as a pass of the lesson.
    observer.add('T3-2', 'observer-mark', k1.id, 'missed')
    const both = replayLesson([...coach.events, ...observer.events], content)
    expect(both.scores).toEqual(alone.scores)
    expect(both.readiness).toEqual(alone.readiness)
    expect(both.passes.map(p => p.key)).toEqual(alone.passes.map(p => p.key))
    expect(both.passes.map(p => [...p.marks])).toEqual(alone.passes.map(p => [...p.marks]))
    expect(alone.readiness.suggestion).toBe('ready')
  })

  it('keep the latest effective observer mark per pass and element; undo applies; foreign elements are dropped', () => {
    const o = recorder('observer-tablet')
    o.add('T3-1', 'observer-mark', k1.id, 'missed')
    o.add('T3-1', 'observer-mark', k1.id, 'cued')
    const wrong = o.add('T3-1', 'observer-mark', k2.id, 'missed')
    o.add('T3-1', 'undo', null, wrong.id)
    o.add('T4-1', 'observer-mark', k3.id, 'unaided') // k3 has no reason: not part of T4
    o.add('T1-1', 'observer-mark', s1!.id, 'sideways') // not a mark value
    o.add('P1-1', 'observer-mark', s1!.id, 'unaided') // present passes carry no marks
    const marks = observerMarks(o.events, content)
    expect([...marks.keys()]).toEqual(['T3-1'])
    expect([...marks.get('T3-1')!]).toEqual([[k1.id, 'cued']])
  })

  it('pair each element both coaches marked in each try-out pass', () => {
    const coach = recorder('coach-tablet')
    coach.add('T1-1', 'mark', s1!.id, 'unaided')
    coach.add('T1-1', 'mark', s2!.id, 'cued')
    coach.add('T1-1', 'mark', s3!.id, 'missed')
    coach.add('T3-1', 'mark', k1.id, 'cued')
    coach.add('T3-1', 'mark', k2.id, 'unaided')
    coach.add('T3-2', 'mark', k1.id, 'unaided')
    const observer = recorder('observer-tablet')
    observer.add('T1-1', 'observer-mark', s1!.id, 'unaided') // agree
    observer.add('T1-1', 'observer-mark', s2!.id, 'unaided') // coach cued, observer unaided
    observer.add('T1-1', 'observer-mark', s3!.id, 'missed') // agree
    observer.add('T3-1', 'observer-mark', k1.id, 'cued') // agree
    observer.add('T3-1', 'observer-mark', k3.id, 'missed') // coach did not mark k3: no pair
    observer.add('T3-2', 'observer-mark', k1.id, 'cued') // coach unaided, observer cued
    const a = observerAgreement([...coach.events, ...observer.events], content)
    expect(a.n).toBe(5)
    // rows: lesson's mark, columns: observer's mark (unaided, cued, missed)
    expect(a.confusion).toEqual([[1, 1, 0], [1, 1, 0], [0, 0, 1]])
    expect(a.observedPasses).toEqual(['T1-1', 'T3-1', 'T3-2'])
    // Hand-computed: p_o = 3/5; rows 2, 2, 1 and columns 2, 2, 1, p_e = (4 + 4 + 1) / 25 = 9/25;
    // κ = (15 − 9) / (25 − 9) = 6/16 = 0.375.
    expect(a.observed).toBeCloseTo(0.6, 12)
    expect(a.expected).toBeCloseTo(9 / 25, 12)
    expect(a.kappa).toBeCloseTo(0.375, 12)
    expect(agreementWords(a)).toBe('Agreement between the two coaches: κ = 0.38, fair (5 marks compared; they gave the same mark 60 % of the time, chance alone would give 36 %).')
  })

  it('say so in words when there is nothing to compare', () => {
    expect(agreementWords(observerAgreement([], content))).toMatch(/nothing to compare yet/)
  })
})
