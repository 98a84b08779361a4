import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { SIGN_IN_FAILURE_LIMIT, SIGN_IN_WINDOW_MS, throttleDecision } from '../../shared/utils/throttle'

const now = 1_800_000_000_000

describe('sign-in throttling', () => {
  it('allows up to nine recent failures and blocks at the tenth', () => {
    const nine = Array.from({ length: 9 }, (_, i) => now - i * 1000)
    expect(throttleDecision(nine, now).blocked).toBe(false)
    const ten = [...nine, now - 20_000]
    expect(throttleDecision(ten, now)).toEqual({ blocked: true, retryAfterSeconds: Math.ceil((now - 20_000 + SIGN_IN_WINDOW_MS - now) / 1000) })
  })

  it('forgets failures older than fifteen minutes', () => {
    const old = Array.from({ length: 50 }, (_, i) => now - SIGN_IN_WINDOW_MS - i)
    expect(throttleDecision(old, now).blocked).toBe(false)
  })

  it('tells how long until the window frees one attempt', () => {
    // Ten failures, the oldest 14 minutes ago: one minute until it leaves the window.
    const times = [now - 14 * 60_000, ...Array.from({ length: 9 }, () => now - 1000)]
    expect(throttleDecision(times, now).retryAfterSeconds).toBe(60)
  })

  // OWASP ASVS 4.0.3 §2.2.1: no more than 100 failed attempts per hour are possible on a single account.
  it('lets an attacker who retries as soon as allowed make at most 100 attempts an hour (ASVS 4.0.3 §2.2.1)', () => {
    fc.assert(fc.property(fc.integer({ min: 1, max: 120 }), (stepSeconds) => {
      const failures: number[] = []
      let t = now
      const end = now + 60 * 60 * 1000
      while (t < end) {
        const decision = throttleDecision(failures, t)
        if (decision.blocked) t += decision.retryAfterSeconds * 1000
        else {
          failures.push(t)
          t += stepSeconds * 1000
        }
      }
      const inHour = failures.filter(f => f < end).length
      return inHour <= 100 && inHour <= SIGN_IN_FAILURE_LIMIT * 4
    }), { numRuns: 200 })
  })
})
