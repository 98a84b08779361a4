// When a sync that did not get through is tried again by itself. A push that got no answer is
// kept whole in the outbox (applyPushAnswer only runs on an answer), and sending it again is safe
// (the server takes the same ids as no-ops), so the only question is when.
//   - The server said "later" (503, and 429 / 502 / 504 from it or a proxy): after its Retry-After
//     (RFC 9110 §10.2.3: delay-seconds or an HTTP-date), or the backoff below when it gave none.
//   - No answer at all (the connection dropped mid-push): the backoff below.
//   - Anything else (401, a refusal, a 500) needs a person: no automatic retry.

/** The backoff without Retry-After: 5 s, 10 s, 20 s … up to 5 minutes. */
const FIRST_RETRY_MS = 5_000
const LONGEST_RETRY_MS = 5 * 60_000
/** A Retry-After is honoured between these bounds (a server asking for days is not waited for). */
const SHORTEST_WAIT_MS = 1_000
const LONGEST_WAIT_MS = 10 * 60_000

const LATER_STATUSES = new Set([429, 502, 503, 504])

/** Milliseconds a Retry-After value asks for, or null when it is missing or unreadable. */
export function parseRetryAfter(value: string | null | undefined, now = Date.now()): number | null {
  const text = value?.trim()
  if (!text) return null
  if (/^\d+$/.test(text)) return Number(text) * 1000
  // An HTTP-date names its month ("Wed, 21 Oct 2026 07:28:00 GMT"); a bare "-3" is no date.
  if (!/[a-z]{3}/i.test(text)) return null
  const at = Date.parse(text)
  return Number.isNaN(at) ? null : Math.max(0, at - now)
}

/**
 * How long to wait before the next automatic try, or null when none should be made.
 * `attempt` counts the failed tries in a row so far (1 for the first).
 */
export function syncRetryDelay(failure: { status?: number, retryAfter?: string | null }, attempt: number, now = Date.now()): number | null {
  const { status } = failure
  if (status !== undefined && !LATER_STATUSES.has(status)) return null
  const asked = status === undefined ? null : parseRetryAfter(failure.retryAfter, now)
  if (asked !== null) return Math.min(LONGEST_WAIT_MS, Math.max(SHORTEST_WAIT_MS, asked))
  return Math.min(LONGEST_RETRY_MS, FIRST_RETRY_MS * 2 ** Math.max(0, attempt - 1))
}

/** "in 5 seconds", "in 2 minutes": when the next try is, for the sync panel. */
export function retryWords(ms: number): string {
  const seconds = Math.max(1, Math.round(ms / 1000))
  if (seconds < 90) return `in ${seconds} second${seconds === 1 ? '' : 's'}`
  const minutes = Math.round(seconds / 60)
  return `in ${minutes} minute${minutes === 1 ? '' : 's'}`
}
