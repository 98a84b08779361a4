// Invite by e-mail → captured mail → accept → sign in with the invited role.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { Client, uniqueAddress } from '../support/http'
import { PASSWORD, addMember, signUp, tokenFrom, uniqueEmail } from '../support/accounts'

let server: TestServer
beforeAll(async () => {
  server = await startServer()
})
afterAll(() => server?.stop())

describe('invitations', () => {
  it('e-mails a working one-time link with text and HTML parts; the invitee joins with the invited role', async () => {
    const admin = await signUp(server, 'Crumb & Crust')
    const email = uniqueEmail('coach')
    const invite = await admin.client.post('/api/invites', { email, role: 'coach' })
    expect(invite.status).toBe(201)
    expect(invite.body).toMatchObject({ email, role: 'coach', mailed: true })
    expect(invite.body.token).toBeUndefined()

    const open = await admin.client.get('/api/invites')
    expect(open.body.map((i: { email: string }) => i.email)).toContain(email)

    const mail = await server.waitForMail(m => m.to.includes(email))
    expect(mail.subject).toBe('Join Crumb & Crust on Fourfold')
    expect(mail.text).toContain('as coach')
    expect(mail.links).toHaveLength(1)
    const link = mail.links[0]!
    expect(link.startsWith(`${server.url}/accept-invite?token=`)).toBe(true)
    expect(mail.html).toContain(`href="${link}"`)
    // The link opens the accept page.
    expect((await fetch(link)).status).toBe(200)

    const invitee = new Client(server.url, uniqueAddress())
    const accepted = await invitee.post('/api/invites/accept', { token: tokenFrom(link), name: 'New Coach', password: PASSWORD })
    expect(accepted.status).toBe(200)
    expect((await invitee.get('/api/me')).body).toMatchObject({ role: 'coach', user: { email, name: 'New Coach' } })

    const again = await new Client(server.url, uniqueAddress()).post('/api/invites/accept', { token: tokenFrom(link), name: 'Someone', password: PASSWORD })
    expect(again.status).toBe(400)
    expect(again.body.message).toMatch(/accepted already/)

    const signIn = new Client(server.url, uniqueAddress())
    expect((await signIn.post('/api/auth/login', { email, password: PASSWORD })).status).toBe(200)
    expect((await signIn.get('/api/me')).body.role).toBe('coach')
    expect((await admin.client.get('/api/invites')).body.map((i: { email: string }) => i.email)).not.toContain(email)
  })

  it('stops a withdrawn or replaced invitation from working', async () => {
    const admin = await signUp(server)
    const email = uniqueEmail('learner')
    const first = await admin.client.post('/api/invites', { email, role: 'learner' })
    const firstMail = await server.waitForMail(m => m.to.includes(email))
    await admin.client.post('/api/invites', { email, role: 'auditor' })
    const mails = async () => (await server.mails()).filter(m => m.to.includes(email))
    for (let i = 0; i < 50 && (await mails()).length < 2; i++) await new Promise(r => setTimeout(r, 100))
    const secondMail = (await mails()).at(-1)!
    expect(secondMail.id).not.toBe(firstMail.id)

    const replaced = await new Client(server.url).post('/api/invites/accept', { token: tokenFrom(firstMail.links[0]!), name: 'X', password: PASSWORD })
    expect(replaced.status).toBe(400)
    expect(replaced.body.message).toMatch(/withdrawn/)

    const open = (await admin.client.get('/api/invites')).body as Array<{ id: string, email: string }>
    const current = open.find(i => i.email === email)!
    expect(current.id).not.toBe(first.body.id)
    expect((await admin.client.delete(`/api/invites/${current.id}`)).status).toBe(204)
    const withdrawn = await new Client(server.url).post('/api/invites/accept', { token: tokenFrom(secondMail.links[0]!), name: 'X', password: PASSWORD })
    expect(withdrawn.status).toBe(400)
  })

  it('refuses an invitation to an address that already has an account', async () => {
    const admin = await signUp(server)
    const other = await signUp(server)
    const res = await admin.client.post('/api/invites', { email: other.email, role: 'coach' })
    expect(res.status).toBe(409)
    expect(res.body.data.fieldErrors.email).toBeDefined()
  })

  it('refuses made-up tokens', async () => {
    const res = await new Client(server.url).post('/api/invites/accept', { token: 'x'.repeat(43), name: 'X', password: PASSWORD })
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(/not valid/)
  })

  it('lets only admins invite', async () => {
    const admin = await signUp(server)
    const coach = await addMember(server, admin.client, 'coach')
    const res = await coach.client.post('/api/invites', { email: uniqueEmail('x'), role: 'admin' })
    expect(res.status).toBe(403)
  })
})
