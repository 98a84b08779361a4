// The shape of a role × route matrix entry (tests/e2e/route-matrix.test.ts).
import { randomUUID } from 'node:crypto'
import type { Role } from '../../shared/types/roles'

export type Access = 'public' | 'signed-in' | Role[]
// `ownSession`: the request replaces or ends the caller's session, so it runs on a copy.
// Bodies should be valid so that the answer speaks of the role, not of the input.
export interface Entry { access: Access, path?: () => string, body?: () => unknown, ownSession?: boolean }

export const missingId = () => randomUUID()
