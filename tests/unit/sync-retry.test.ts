// When the tablet tries a sync again by itself (app/utils/sync-retry.ts).
import { describe, expect, it } from 'vitest'
import { parseRetryAfter, retryWords, syncRetryDelay } from '../../app/utils/sync-retry'

describe('Retry-After', () => {
  // RFC 9110 §10.2.3: Retry-After = HTTP-date / delay-seconds.
  it('reads delay-seconds and an HTTP-date, and nothing else', () => {
    const now = Date.parse('Wed, 21 Oct 2026 07:28:00 GMT')
    expect(parseRetryAfter('5', now)).toBe(5000)
    expect(parseRetryAfter(' 120 ', now)).toBe(120_000)
    expect(parseRetryAfter('Wed, 21 Oct 2026 07:28:30 GMT', now)).toBe(30_000)
    expect(parseRetryAfter('Wed, 21 Oct 2026 07:27:00 GMT', now)).toBe(0)
    expect(parseRetryAfter('soon', now)).toBeNull()
    expect(parseRetryAfter('-3', now)).toBeNull()
    expect(parseRetryAfter('', now)).toBeNull()
    expect(parseRetryAfter(null, now)).toBeNull()
  })
})

describe('the next automatic try', () => {
  it('waits what the server asked when it said "later", within sane bounds', () => {
    expect(syncRetryDelay({ status: 503, retryAfter: '5' }, 1)).toBe(5000)
    expect(syncRetryDelay({ status: 503, retryAfter: '5' }, 4)).toBe(5000)
    expect(syncRetryDelay({ status: 429, retryAfter: '30' }, 1)).toBe(30_000)
    expect(syncRetryDelay({ status: 503, retryAfter: '0' }, 1)).toBe(1000)
    expect(syncRetryDelay({ status: 503, retryAfter: '86400' }, 1)).toBe(10 * 60_000)
  })

  it('backs off 5 s, 10 s, 20 s … up to 5 minutes without Retry-After, and after a dropped connection', () => {
    expect([1, 2, 3, 4].map(n => syncRetryDelay({ status: 502 }, n))).toEqual([5000, 10_000, 20_000, 40_000])
    expect([1, 2, 3].map(n => syncRetryDelay({}, n))).toEqual([5000, 10_000, 20_000])
    expect(syncRetryDelay({}, 12)).toBe(5 * 60_000)
    // A Retry-After without a status cannot have come from a server's answer.
    expect(syncRetryDelay({ retryAfter: '1' }, 1)).toBe(5000)
  })

  it('leaves refusals that need a person to the coach', () => {
    for (const status of [400, 401, 403, 404, 409, 413, 422, 500]) expect(syncRetryDelay({ status, retryAfter: '5' }, 1)).toBeNull()
  })

  it('says when, in words', () => {
    expect(retryWords(5000)).toBe('in 5 seconds')
    expect(retryWords(1000)).toBe('in 1 second')
    expect(retryWords(300)).toBe('in 1 second')
    expect(retryWords(80_000)).toBe('in 80 seconds')
    expect(retryWords(5 * 60_000)).toBe('in 5 minutes')
  })
})
