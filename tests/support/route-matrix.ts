// The shape of a role × route matrix entry (tests/e2e/route-matrix.test.ts), and the routes as the
// tree under server/api/ names them (the matrix and the hostile-input fuzz both walk it).
import { randomUUID } from 'node:crypto'
import { readdirSync, statSync } from 'node:fs'
import { join, relative } from 'node:path'
import type { Role } from '../../shared/types/roles'

export type Access = 'public' | 'signed-in' | Role[]
// `ownSession`: the request replaces or ends the caller's session, so it runs in a second session
// of the same person (signing out ends every copy of a session's cookie).
// Bodies should be valid so that the answer speaks of the role, not of the input.
export interface Entry { access: Access, path?: () => string, body?: () => unknown, ownSession?: boolean }

export const missingId = () => randomUUID()

export function routeFiles(dir = 'server/api'): string[] {
  return readdirSync(dir).flatMap((name) => {
    const full = join(dir, name)
    return statSync(full).isDirectory() ? routeFiles(full) : [full]
  })
}

/** `server/api/members/[id].patch.ts` → `PATCH /api/members/[id]`. */
export function routeKey(file: string): string {
  const rel = relative('server/api', file).replace(/\\/g, '/').replace(/\.ts$/, '')
  const match = /^(.*?)(?:\.(get|post|put|patch|delete))$/.exec(rel)
  const path = match ? match[1]! : rel
  const method = (match?.[2] ?? 'get').toUpperCase()
  const clean = path.replace(/(^|\/)index$/, '')
  return `${method} /api${clean ? `/${clean}` : ''}`
}
