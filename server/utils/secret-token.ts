// One-time tokens for e-mailed links: 32 random bytes for the link, SHA-256 in the database,
// so a leaked database cannot be turned into working links.
import { createHash, randomBytes } from 'node:crypto'

export function hashToken(token: string): string {
  return createHash('sha256').update(token).digest('hex')
}

export function newSecretToken(): { token: string, hash: string } {
  const token = randomBytes(32).toString('base64url')
  return { token, hash: hashToken(token) }
}
