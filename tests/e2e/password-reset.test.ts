// Forgotten password: an e-mailed one-time link that expires and works once.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { Client, uniqueAddress } from '../support/http'
import { PASSWORD, signUp, tokenFrom, uniqueEmail } from '../support/accounts'
import { sql } from '../support/db'
import { hashToken } from '../../server/utils/secret-token'

let server: TestServer
beforeAll(async () => {
  server = await startServer()
})
afterAll(() => server?.stop())

describe('password reset', () => {
  it('answers 202 alike for known and unknown addresses, and mails only the known one', async () => {
    const { email } = await signUp(server)
    const unknown = uniqueEmail('nobody')
    const a = await new Client(server.url).post('/api/auth/forgot', { email: unknown })
    const b = await new Client(server.url).post('/api/auth/forgot', { email })
    expect(a.status).toBe(202)
    expect(b.status).toBe(202)
    expect(a.body).toEqual(b.body)
    await server.waitForMail(m => m.to.includes(email))
    expect((await server.mails()).some(m => m.to.includes(unknown))).toBe(false)
  })

  it('resets with the link once, ends old sessions, and refuses the link a second time', async () => {
    const { email, client: oldSession } = await signUp(server)
    await new Client(server.url).post('/api/auth/forgot', { email })
    const mail = await server.waitForMail(m => m.to.includes(email) && m.subject.includes('password'))
    expect(mail.text).toContain('expires in 60 minutes')
    expect(mail.html).toContain('href="')
    const link = mail.links[0]!
    expect(link.startsWith(`${server.url}/reset-password?token=`)).toBe(true)
    expect((await fetch(link)).status).toBe(200)

    const tooShort = await new Client(server.url).post('/api/auth/reset', { token: tokenFrom(link), password: 'short' })
    expect(tooShort.status).toBe(422)
    expect(tooShort.body.data.fieldErrors.password).toEqual(['Use at least 10 characters.'])

    const reset = await new Client(server.url).post('/api/auth/reset', { token: tokenFrom(link), password: 'my new passphrase' })
    expect(reset.status).toBe(200)
    expect((await oldSession.get('/api/me')).status).toBe(401)
    expect((await new Client(server.url, uniqueAddress()).post('/api/auth/login', { email, password: PASSWORD })).status).toBe(401)
    expect((await new Client(server.url, uniqueAddress()).post('/api/auth/login', { email, password: 'my new passphrase' })).status).toBe(200)

    const reuse = await new Client(server.url).post('/api/auth/reset', { token: tokenFrom(link), password: 'another passphrase' })
    expect(reuse.status).toBe(400)
    expect(reuse.body.message).toMatch(/used already/)
  })

  it('refuses an expired link', async () => {
    const { email } = await signUp(server)
    await new Client(server.url).post('/api/auth/forgot', { email })
    const mail = await server.waitForMail(m => m.to.includes(email) && m.subject.includes('password'))
    const token = tokenFrom(mail.links[0]!)
    await sql(server.databaseUrl, 'update password_resets set expires_at = ? where token_hash = ?', [Date.now() - 1000, hashToken(token)])
    const res = await new Client(server.url).post('/api/auth/reset', { token, password: 'my new passphrase' })
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(/expired/)
    expect((await new Client(server.url, uniqueAddress()).post('/api/auth/login', { email, password: PASSWORD })).status).toBe(200)
  })

  it('refuses an expired invitation too', async () => {
    const admin = await signUp(server)
    const email = uniqueEmail('late')
    await admin.client.post('/api/invites', { email, role: 'coach' })
    const mail = await server.waitForMail(m => m.to.includes(email))
    const token = tokenFrom(mail.links[0]!)
    await sql(server.databaseUrl, 'update invites set expires_at = ? where token_hash = ?', [Date.now() - 1000, hashToken(token)])
    const res = await new Client(server.url).post('/api/invites/accept', { token, name: 'Late', password: PASSWORD })
    expect(res.status).toBe(400)
    expect(res.body.message).toMatch(/expired/)
  })

  it('stores only hashes of tokens', async () => {
    const { email } = await signUp(server)
    await new Client(server.url).post('/api/auth/forgot', { email })
    const mail = await server.waitForMail(m => m.to.includes(email) && m.subject.includes('password'))
    const token = tokenFrom(mail.links[0]!)
    const rows = await sql(server.databaseUrl, 'select token_hash from password_resets')
    expect(rows.rows.some(r => r.token_hash === token)).toBe(false)
    expect(rows.rows.some(r => r.token_hash === hashToken(token))).toBe(true)
  })
})
