import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { discordantPairs, orderScore } from '../../shared/utils/order-metrics'

describe('order score (normalised Kendall tau distance)', () => {
  // Hollander & Wolfe (1973), p. 187, the example printed in R's ?cor.test: cor.test(x, y, method = "kendall")
  // reports T = 26 and tau = 0.4444444 (values from memory of R's output, verified here by counting).
  const x = [44.4, 45.9, 41.9, 53.3, 44.7, 44.1, 50.7, 45.2, 60.1]
  const y = [2.6, 3.1, 2.5, 5.0, 3.6, 4.0, 5.2, 2.8, 3.8]

  it('counts 26 concordant and 10 discordant pairs in the Hollander & Wolfe example (tau ≈ 0.444)', () => {
    let concordant = 0
    let discordant = 0
    for (let i = 0; i < x.length; i++) {
      for (let j = i + 1; j < x.length; j++) {
        const s = Math.sign(x[i]! - x[j]!) * Math.sign(y[i]! - y[j]!)
        if (s > 0) concordant++
        else if (s < 0) discordant++
      }
    }
    expect([concordant, discordant]).toEqual([26, 10])
    expect((concordant - discordant) / 36).toBeCloseTo(0.4444444, 6)

    // The same data as a recital: the breakdown's order is the order of x, the learner's the order of y.
    const ids = x.map((_, i) => `s${i}`)
    const reference = [...ids].sort((a, b) => x[ids.indexOf(a)]! - x[ids.indexOf(b)]!)
    const recited = [...ids].sort((a, b) => y[ids.indexOf(a)]! - y[ids.indexOf(b)]!)
    expect(discordantPairs(reference, recited)).toEqual({ discordant: 10, pairs: 36 })
    expect(orderScore(reference, recited)).toBeCloseTo(100 * (1 - 10 / 36), 10)
    // tau = 1 − 2·d/pairs links the two: 1 − 2 × 10/36 = 0.444…
    expect(1 - 2 * (10 / 36)).toBeCloseTo(0.4444444, 6)
  })

  it('is 100 in order, 0 fully reversed, and 100 when fewer than two steps were named', () => {
    expect(orderScore(['a', 'b', 'c', 'd'], ['a', 'b', 'c', 'd'])).toBe(100)
    expect(orderScore(['a', 'b', 'c', 'd'], ['d', 'c', 'b', 'a'])).toBe(0)
    expect(orderScore(['a', 'b', 'c'], ['b'])).toBe(100)
    expect(orderScore(['a', 'b', 'c'], [])).toBe(100)
  })

  it('counts only steps the learner named, once each, and ignores ids that are not steps', () => {
    expect(discordantPairs(['a', 'b', 'c', 'd'], ['c', 'a', 'zz', 'a'])).toEqual({ discordant: 1, pairs: 1 })
  })

  // Kendall tau distance equals the number of adjacent swaps bubble sort needs (Kendall, 1938;
  // the "bubble-sort distance"): checked against a plain bubble sort on random permutations.
  it('equals the bubble-sort swap count on random permutations', () => {
    fc.assert(fc.property(fc.integer({ min: 0, max: 15 }).chain(n => fc.shuffledSubarray([...Array(n).keys()], { minLength: n, maxLength: n })), (perm) => {
      const a = [...perm]
      let swaps = 0
      for (let i = 0; i < a.length; i++) {
        for (let j = 0; j < a.length - 1 - i; j++) {
          if (a[j]! > a[j + 1]!) {
            [a[j], a[j + 1]] = [a[j + 1]!, a[j]!]
            swaps++
          }
        }
      }
      const ids = perm.map(String)
      return discordantPairs([...perm].sort((p, q) => p - q).map(String), ids).discordant === swaps
    }), { numRuns: 500 })
  })
})
