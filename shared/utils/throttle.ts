// Sign-in throttling rule, pure so the tests can check it without a server.
// OWASP ASVS 4.0.3 §2.2.1 allows at most 100 failed attempts an hour per account;
// we refuse after 10 failures in 15 minutes (at most 40 an hour).
export const SIGN_IN_FAILURE_LIMIT = 10
export const SIGN_IN_WINDOW_MS = 15 * 60 * 1000

export interface ThrottleDecision {
  blocked: boolean
  /** Whole seconds until one more attempt is allowed; 0 when not blocked. */
  retryAfterSeconds: number
}

export function throttleDecision(failureTimes: readonly number[], now: number, limit = SIGN_IN_FAILURE_LIMIT, windowMs = SIGN_IN_WINDOW_MS): ThrottleDecision {
  const recent = failureTimes.filter(t => t > now - windowMs && t <= now).sort((a, b) => a - b)
  if (recent.length < limit) return { blocked: false, retryAfterSeconds: 0 }
  // The attempt becomes possible again once enough failures have left the window
  // that fewer than `limit` remain.
  const freeingFailure = recent[recent.length - limit]!
  return { blocked: true, retryAfterSeconds: Math.max(1, Math.ceil((freeingFailure + windowMs - now) / 1000)) }
}
