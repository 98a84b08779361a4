import { describe, expect, it } from 'vitest'
import { INVITE_TOKEN_LIFETIME_MS, RESET_TOKEN_LIFETIME_MS, tokenState } from '../../shared/utils/tokens'
import { hashToken, newSecretToken } from '../../server/utils/secret-token'

describe('one-time tokens', () => {
  const now = Date.UTC(2026, 11, 2, 9, 0, 0)

  it('is usable before it expires, expired at and after the instant', () => {
    expect(tokenState({ expiresAt: now + 1 }, now)).toBe('usable')
    expect(tokenState({ expiresAt: now }, now)).toBe('expired')
    expect(tokenState({ expiresAt: new Date(now - 1) }, now)).toBe('expired')
  })

  it('is single use: once used it stays used, even before expiry', () => {
    expect(tokenState({ expiresAt: now + 10_000, usedAt: new Date(now - 5) }, now)).toBe('used')
  })

  it('keeps reset links short-lived (OWASP Forgot Password Cheat Sheet: tokens expire after a suitable period; we take one hour)', () => {
    expect(RESET_TOKEN_LIFETIME_MS).toBeLessThanOrEqual(60 * 60 * 1000)
    expect(INVITE_TOKEN_LIFETIME_MS).toBe(7 * 24 * 60 * 60 * 1000)
  })

  it('stores only a SHA-256 of the token; the digest matches the published test vector', () => {
    // FIPS 180-2 / NIST example: SHA-256("abc").
    expect(hashToken('abc')).toBe('ba7816bf8f01cfea414140de5dae2223b00361a396177a9cb410ff61f20015ad')
    const { token, hash } = newSecretToken()
    expect(hash).toBe(hashToken(token))
    // 32 random bytes in base64url: 43 characters, at least 128 bits of entropy (ASVS 5.0 V7.2.3).
    expect(token).toMatch(/^[\w-]{43}$/)
    expect(newSecretToken().token).not.toBe(token)
  })
})
