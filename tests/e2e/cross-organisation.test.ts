// No request ever reads or writes another organisation's data: B's ids with A's session answer 404,
// and B's rows are unchanged afterwards.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { addMember, signUp, uniqueEmail } from '../support/accounts'

let server: TestServer
let a: Awaited<ReturnType<typeof signUp>>
let b: Awaited<ReturnType<typeof signUp>>
const bIds: Record<string, string> = {}

beforeAll(async () => {
  server = await startServer()
  a = await signUp(server, 'Org A')
  b = await signUp(server, 'Org B')
  bIds.member = (await addMember(server, b.client, 'coach')).membershipId
  bIds.area = (await b.client.post('/api/work-areas', { name: 'B ovens' })).body.id
  bIds.invite = (await b.client.post('/api/invites', { email: uniqueEmail('b-invitee'), role: 'learner' })).body.id
}, 120_000)
afterAll(() => server?.stop())

describe('cross-organisation', () => {
  const attempts: Array<[string, string, () => string, unknown?]> = [
    ['PATCH', 'member', () => `/api/members/${bIds.member}`, { role: 'admin' }],
    ['DELETE', 'member', () => `/api/members/${bIds.member}`],
    ['PATCH', 'work area', () => `/api/work-areas/${bIds.area}`, { name: 'Taken over' }],
    ['DELETE', 'work area', () => `/api/work-areas/${bIds.area}`],
    ['DELETE', 'invite', () => `/api/invites/${bIds.invite}`],
  ]

  it.each(attempts)('%s of B\'s %s with A\'s admin session answers 404', async (method, _what, path, body) => {
    const res = await a.client.request(method, path(), body ?? (method === 'GET' ? undefined : {}))
    expect(res.status).toBe(404)
    expect(res.body.message).toMatch(/not found in your organisation/)
  })

  it('leaves B\'s data as it was and never lists it to A', async () => {
    const members = (await b.client.get('/api/members')).body as Array<{ id: string, role: string }>
    expect(members.find(m => m.id === bIds.member)?.role).toBe('coach')
    expect((await b.client.get('/api/work-areas')).body).toEqual([{ id: bIds.area, name: 'B ovens' }])
    expect((await b.client.get('/api/invites')).body.map((i: { id: string }) => i.id)).toContain(bIds.invite)

    const aMembers = (await a.client.get('/api/members')).body as Array<{ id: string }>
    expect(aMembers.map(m => m.id)).not.toContain(bIds.member)
    expect((await a.client.get('/api/work-areas')).body).toEqual([])
    expect((await a.client.get('/api/invites')).body).toEqual([])
    const audit = (await a.client.get('/api/audit')).body as Array<{ targetId: string }>
    expect(audit.map(e => e.targetId)).not.toContain(bIds.area)
  })

  it('lets A use the same work area name as B', async () => {
    expect((await a.client.post('/api/work-areas', { name: 'B ovens' })).status).toBe(201)
    expect((await a.client.post('/api/work-areas', { name: 'B ovens' })).status).toBe(409)
  })
})
