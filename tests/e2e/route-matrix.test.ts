/// <reference types="vite/client" />
// The role × route matrix. Every file under server/api/ must have an entry here, so no
// route can skip the authorization check: a new route fails this test until it is listed.
// Areas keep their entries in tests/e2e/route-matrix/<area>.ts (export const entries), merged below.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { Client, uniqueAddress } from '../support/http'
import { PASSWORD, addMember, signUp, uniqueEmail } from '../support/accounts'
import { photoForm } from '../support/photos'
import { ROLES, type Role } from '../../shared/types/roles'

import { missingId, routeFiles, routeKey, type Entry } from '../support/route-matrix'

// Bodies are valid so that the answer speaks of the role, not of the input.
const CORE: Record<string, Entry> = {
  'GET /api/health': { access: 'public' },
  'GET /api/dev/mail': { access: 'public' },
  'POST /api/auth/signup': { access: 'public', ownSession: true, body: () => ({ organisation: 'Matrix Org', name: 'M', email: uniqueEmail('m'), password: 'matrix passphrase' }) },
  'POST /api/auth/login': { access: 'public', body: () => ({ email: uniqueEmail('nobody'), password: 'whatever' }) },
  'POST /api/auth/logout': { access: 'public', ownSession: true },
  'POST /api/auth/forgot': { access: 'public', body: () => ({ email: uniqueEmail('nobody') }) },
  'POST /api/auth/reset': { access: 'public', body: () => ({ token: 'x'.repeat(43), password: 'matrix passphrase' }) },
  'POST /api/invites/accept': { access: 'public', ownSession: true, body: () => ({ token: 'x'.repeat(43), name: 'M', password: 'matrix passphrase' }) },
  'POST /api/auth/password': { access: 'signed-in', ownSession: true, body: () => ({ currentPassword: 'not it', newPassword: 'matrix passphrase' }) },
  'GET /api/me': { access: 'signed-in' },
  'GET /api/work-areas': { access: 'signed-in' },
  'POST /api/work-areas': { access: ['admin'], body: () => ({ name: `Area ${randomUUID()}` }) },
  'PATCH /api/work-areas/[id]': { access: ['admin'], path: () => `/api/work-areas/${missingId()}`, body: () => ({ name: 'Renamed' }) },
  'DELETE /api/work-areas/[id]': { access: ['admin'], path: () => `/api/work-areas/${missingId()}` },
  'GET /api/invites': { access: ['admin'] },
  'POST /api/invites': { access: ['admin'], body: () => ({ email: uniqueEmail('invitee'), role: 'learner' }) },
  'DELETE /api/invites/[id]': { access: ['admin'], path: () => `/api/invites/${missingId()}` },
  'GET /api/members': { access: ['admin'] },
  'PATCH /api/members/[id]': { access: ['admin'], path: () => `/api/members/${missingId()}`, body: () => ({ role: 'coach' }) },
  'DELETE /api/members/[id]': { access: ['admin'], path: () => `/api/members/${missingId()}` },
  'PATCH /api/organisation': { access: ['admin'], body: () => ({ coachesMayPublish: true }) },
  'GET /api/audit': { access: ['admin', 'auditor'] },
  'GET /api/learners': { access: ['admin', 'coach', 'auditor'] },
  'GET /api/learners/[id]/scores': { access: 'signed-in', path: () => `/api/learners/${missingId()}/scores` },
  'GET /api/lessons/[id]': { access: 'signed-in', path: () => `/api/lessons/${missingId()}` },
  'GET /api/sync': { access: ['admin', 'coach'], path: () => '/api/sync?since=0' },
  'POST /api/sync': { access: ['admin', 'coach'], body: () => ({ deviceId: randomUUID(), lessons: [], events: [], checks: [] }) },
  'POST /api/learners': { access: ['admin', 'coach'], body: () => ({ name: 'Matrix Learner' }) },
  'GET /api/learners/[id]': { access: 'signed-in', path: () => `/api/learners/${missingId()}` },
  'PATCH /api/learners/[id]': { access: ['admin', 'coach'], path: () => `/api/learners/${missingId()}`, body: () => ({ reference: 'B-1' }) },
  'GET /api/jobs': { access: 'signed-in' },
  'POST /api/jobs': { access: ['admin', 'coach'], body: () => ({ title: `Matrix job ${randomUUID()}` }) },
  'GET /api/jobs/[id]': { access: 'signed-in', path: () => `/api/jobs/${missingId()}` },
  'PATCH /api/jobs/[id]': { access: ['admin', 'coach'], path: () => `/api/jobs/${missingId()}`, body: () => ({ title: 'Renamed job' }) },
  'DELETE /api/jobs/[id]': { access: ['admin', 'coach'], path: () => `/api/jobs/${missingId()}` },
  'GET /api/jobs/[id]/versions': { access: ['admin', 'coach', 'auditor'], path: () => `/api/jobs/${missingId()}/versions` },
  'POST /api/jobs/[id]/versions': { access: ['admin', 'coach'], path: () => `/api/jobs/${missingId()}/versions` },
  'POST /api/jobs/import': { access: ['admin', 'coach'], body: () => ({ format: 'fourfold.breakdown', formatVersion: 1, exportedAt: new Date().toISOString(), job: { title: 'Imported job' }, version: { number: 1, status: 'draft' }, breakdown: { units: [{ id: randomUUID(), title: '', steps: [] }] } }) },
  // Learners may call it; for them a draft answers 404 like a missing version (tests/e2e/breakdowns.test.ts).
  'GET /api/versions/[id]': { access: 'signed-in', path: () => `/api/versions/${missingId()}` },
  'PATCH /api/versions/[id]': { access: ['admin', 'coach'], path: () => `/api/versions/${missingId()}`, body: () => ({ revision: 0, content: { units: [{ id: randomUUID(), title: '', steps: [] }] } }) },
  // Coaches are allowed here because 'PATCH /api/organisation' above, run as admin, turned coachesMayPublish on;
  // the refusal while it is off is tested in tests/e2e/breakdowns.test.ts.
  'POST /api/versions/[id]/publish': { access: ['admin', 'coach'], path: () => `/api/versions/${missingId()}/publish`, body: () => ({ changeNote: 'Matrix change' }) },
  'POST /api/versions/[id]/retire': { access: ['admin', 'coach'], path: () => `/api/versions/${missingId()}/retire` },
  'GET /api/versions/[id]/export': { access: ['admin', 'coach', 'auditor'], path: () => `/api/versions/${missingId()}/export` },
  // A real photo (multipart, sent as FormData by the client).
  'POST /api/uploads': { access: ['coach', 'admin'], body: () => photoForm() },
  'GET /api/uploads/[id]': { access: 'signed-in', path: () => `/api/uploads/${missingId()}` },
}

const areaFiles = import.meta.glob<{ entries: Record<string, Entry> }>('./route-matrix/*.ts', { eager: true })
export const MATRIX: Record<string, Entry> = Object.assign({}, CORE, ...Object.values(areaFiles).map(f => f.entries))

describe('every route is in the matrix', () => {
  it('lists each file under server/api/ exactly once', () => {
    const keys = routeFiles('server/api').map(routeKey).sort()
    expect(keys.filter(k => !(k in MATRIX))).toEqual([])
    expect(Object.keys(MATRIX).filter(k => !keys.includes(k))).toEqual([])
  })
})

let server: TestServer
const clients: Partial<Record<Role | 'anonymous', Client>> = {}
const emails: Partial<Record<Role, string>> = {}
beforeAll(async () => {
  server = await startServer()
  const admin = await signUp(server)
  clients.admin = admin.client
  emails.admin = admin.email
  for (const role of ROLES.filter(r => r !== 'admin')) {
    const member = await addMember(server, admin.client, role)
    clients[role] = member.client
    emails[role] = member.email
  }
  clients.anonymous = new Client(server.url, uniqueAddress())
}, 120_000)

/**
 * A second session of the same person, for a request that replaces or ends its session. Not a copy
 * of the cookie: signing out ends the session for every copy of it (tests/e2e/web-security.test.ts).
 */
async function ownSession(who: Role | 'anonymous'): Promise<Client> {
  const client = new Client(server.url, uniqueAddress())
  if (who === 'anonymous') return client
  const res = await client.post('/api/auth/login', { email: emails[who], password: PASSWORD })
  if (res.status !== 200) throw new Error(`second session for ${who}: ${res.status} ${res.text}`)
  return client
}
afterAll(() => server?.stop())

describe('role × route', () => {
  const cases = Object.entries(MATRIX).flatMap(([key, entry]) => (['anonymous', ...ROLES] as const).map(who => ({ key, entry, who })))

  it.each(cases)('$key as $who', async ({ key, entry, who }) => {
    const [method, template] = key.split(' ') as [string, string]
    const path = entry.path?.() ?? template
    const body = entry.body?.() ?? (method === 'GET' ? undefined : {})
    const client = entry.ownSession ? await ownSession(who) : clients[who]!
    const res = await client.request(method, path, body)
    expect(res.status, res.text).toBeLessThan(500)
    const allowed = entry.access === 'public' || (who !== 'anonymous' && (entry.access === 'signed-in' || entry.access.includes(who)))
    if (entry.access === 'public') {
      // Public routes never ask for a role; a wrong sign-in is the one 401 they give.
      expect(res.status).not.toBe(403)
      if (key !== 'POST /api/auth/login') expect(res.status).not.toBe(401)
    }
    else if (who === 'anonymous') {
      expect(res.status).toBe(401)
    }
    else if (allowed) {
      expect([401, 403]).not.toContain(res.status)
    }
    else {
      expect(res.status).toBe(403)
    }
  })
})
