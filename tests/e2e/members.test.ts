// Members: change a role, remove someone, and the last-admin rule.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { addMember, signUp } from '../support/accounts'
import { sql } from '../support/db'

let server: TestServer
beforeAll(async () => {
  server = await startServer()
})
afterAll(() => server?.stop())

describe('members', () => {
  it('changes a role, and the new role applies to the member\'s very next request', async () => {
    const admin = await signUp(server)
    const member = await addMember(server, admin.client, 'learner')
    expect((await member.client.get('/api/members')).status).toBe(403)
    const changed = await admin.client.patch(`/api/members/${member.membershipId}`, { role: 'admin' })
    expect(changed.status).toBe(200)
    expect(changed.body.role).toBe('admin')
    expect((await member.client.get('/api/members')).status).toBe(200)
    expect((await member.client.get('/api/me')).body.role).toBe('admin')
  })

  it('never demotes or removes the last admin', async () => {
    const admin = await signUp(server)
    const members = (await admin.client.get('/api/members')).body as Array<{ id: string, role: string }>
    const self = members.find(m => m.role === 'admin')!
    const demote = await admin.client.patch(`/api/members/${self.id}`, { role: 'coach' })
    expect(demote.status).toBe(409)
    expect(demote.body.message).toMatch(/last admin/)
    const remove = await admin.client.delete(`/api/members/${self.id}`)
    expect(remove.status).toBe(409)
    expect((await admin.client.get('/api/me')).body.role).toBe('admin')

    // With a second admin, the first may step down.
    const second = await addMember(server, admin.client, 'admin')
    expect((await admin.client.patch(`/api/members/${self.id}`, { role: 'coach' })).status).toBe(200)
    expect((await second.client.patch(`/api/members/${second.membershipId}`, { role: 'coach' })).status).toBe(409)
  })

  it('removes a member: their session ends and the audit log keeps who it was', async () => {
    const admin = await signUp(server)
    const member = await addMember(server, admin.client, 'coach')
    expect((await admin.client.delete(`/api/members/${member.membershipId}`)).status).toBe(204)
    expect((await member.client.get('/api/me')).status).toBe(401)
    expect((await admin.client.get('/api/members')).body.map((m: { email: string }) => m.email)).not.toContain(member.email)
    const log = await admin.client.get('/api/audit')
    expect(log.body.find((e: { action: string }) => e.action === 'member.removed').detail.email).toBe(member.email)
  })

  it('writes who did what to what, and when, to the audit log', async () => {
    const admin = await signUp(server)
    const member = await addMember(server, admin.client, 'learner')
    await admin.client.patch(`/api/members/${member.membershipId}`, { role: 'auditor' })
    const rows = await sql(server.databaseUrl, 'select action, actor_user_id, target_id, created_at from audit_log where organisation_id = ? order by created_at', [admin.organisationId])
    const actions = rows.rows.map(r => r.action)
    expect(actions).toEqual(['organisation.created', 'invite.created', 'invite.accepted', 'member.role_changed'])
    const change = rows.rows.at(-1)!
    expect(change.actor_user_id).toBe(admin.userId)
    expect(change.target_id).toBe(member.membershipId)
    expect(Number(change.created_at)).toBeGreaterThan(Date.now() - 60_000)
  })
})
