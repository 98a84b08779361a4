import type { H3Event } from 'h3'

/** The caller's address; X-Forwarded-For is believed only behind a proxy we were told about. */
export function clientAddress(event: H3Event): string {
  const trustProxy = process.env.TRUST_PROXY === '1' || process.env.TRUST_PROXY === 'true'
  return getRequestIP(event, { xForwardedFor: trustProxy })?.split(',')[0]?.trim() || 'unknown'
}
