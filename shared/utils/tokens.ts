// Lifetimes of the one-time links Fourfold e-mails, and the rule for using them.
export const RESET_TOKEN_LIFETIME_MS = 60 * 60 * 1000 // one hour (OWASP Forgot Password cheat sheet: short-lived)
export const INVITE_TOKEN_LIFETIME_MS = 7 * 24 * 60 * 60 * 1000 // a week: invitees may be on leave

export type TokenState = 'usable' | 'expired' | 'used'

export function tokenState(token: { expiresAt: Date | number, usedAt?: Date | number | null }, now: number): TokenState {
  if (token.usedAt) return 'used'
  const expires = typeof token.expiresAt === 'number' ? token.expiresAt : token.expiresAt.getTime()
  return now >= expires ? 'expired' : 'usable'
}
