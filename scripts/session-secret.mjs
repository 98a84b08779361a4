// Development and demo only: keep one random session password in .data/ so
// sessions survive restarts without anyone committing a secret.
import { randomBytes } from 'node:crypto'
import { existsSync, mkdirSync, readFileSync, writeFileSync } from 'node:fs'
import { dirname, resolve } from 'node:path'

export function ensureDevSessionPassword(root = process.cwd()) {
  if (process.env.NUXT_SESSION_PASSWORD) return process.env.NUXT_SESSION_PASSWORD
  const file = resolve(root, '.data/session-password')
  if (!existsSync(file)) {
    mkdirSync(dirname(file), { recursive: true })
    writeFileSync(file, randomBytes(32).toString('hex'), { mode: 0o600 })
  }
  const password = readFileSync(file, 'utf8').trim()
  process.env.NUXT_SESSION_PASSWORD = password
  return password
}
