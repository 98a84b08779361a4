// Sign-up, sign-in, sign-out, change password and the session cookie, over HTTP against the built server.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { Client, uniqueAddress } from '../support/http'
import { PASSWORD, signUp, uniqueEmail } from '../support/accounts'

let server: TestServer
beforeAll(async () => {
  server = await startServer()
})
afterAll(() => server?.stop())

describe('accounts', () => {
  it('answers health once the database does', async () => {
    const res = await new Client(server.url).get('/api/health')
    expect(res.status).toBe(200)
    expect(res.body).toEqual({ ok: true })
  })

  it('signs up an organisation and its first admin, already signed in', async () => {
    const client = new Client(server.url, uniqueAddress())
    const email = uniqueEmail('founder')
    const res = await client.post('/api/auth/signup', { organisation: 'Crumb & Crust', name: 'Founder', email: email.toUpperCase(), password: PASSWORD })
    expect(res.status).toBe(201)
    expect(res.body.role).toBe('admin')
    const me = await client.get('/api/me')
    expect(me.status).toBe(200)
    expect(me.body).toMatchObject({ user: { email, name: 'Founder' }, organisation: { name: 'Crumb & Crust' }, role: 'admin' })
  })

  it('refuses a second account with the same address, whatever its case', async () => {
    const { email } = await signUp(server)
    const res = await new Client(server.url, uniqueAddress()).post('/api/auth/signup', { organisation: 'Other', name: 'X', email: email.toUpperCase(), password: PASSWORD })
    expect(res.status).toBe(409)
    expect(res.body.data.fieldErrors.email[0]).toMatch(/already exists/)
  })

  it('signs in with the right password and refuses a wrong one with 401', async () => {
    const { email } = await signUp(server)
    const client = new Client(server.url, uniqueAddress())
    const wrong = await client.post('/api/auth/login', { email, password: 'not the password' })
    expect(wrong.status).toBe(401)
    expect(wrong.body.message).toBe('That e-mail address and password do not match an account.')
    expect((await client.get('/api/me')).status).toBe(401)
    const unknown = await client.post('/api/auth/login', { email: uniqueEmail('nobody'), password: PASSWORD })
    expect(unknown.status).toBe(401)
    expect(unknown.body.message).toBe(wrong.body.message)
    const right = await client.post('/api/auth/login', { email, password: PASSWORD })
    expect(right.status).toBe(200)
    expect((await client.get('/api/me')).status).toBe(200)
  })

  it('issues a fresh session at sign-in: a cookie from before sign-in is not carried over', async () => {
    const { email } = await signUp(server)
    const client = new Client(server.url, uniqueAddress())
    const first = await client.post('/api/auth/login', { email, password: PASSWORD })
    const cookieA = first.headers.getSetCookie().find(c => c.startsWith('fourfold-session='))!
    const second = await client.post('/api/auth/login', { email, password: PASSWORD })
    const cookieB = second.headers.getSetCookie().find(c => c.startsWith('fourfold-session='))!
    expect(cookieA.split(';')[0]).not.toBe(cookieB.split(';')[0])
  })

  it('sets an HttpOnly, SameSite=Lax session cookie that expires after twelve hours', async () => {
    const client = new Client(server.url, uniqueAddress())
    const res = await client.post('/api/auth/signup', { organisation: 'Cookie Check', name: 'C', email: uniqueEmail('cookie'), password: PASSWORD })
    const cookie = res.headers.getSetCookie().find(c => c.startsWith('fourfold-session='))!
    expect(cookie).toMatch(/HttpOnly/i)
    expect(cookie).toMatch(/SameSite=Lax/i)
    const expires = Date.parse(/Expires=([^;]+)/i.exec(cookie)![1]!)
    expect(Math.abs(expires - (Date.now() + 12 * 3600_000))).toBeLessThan(60_000)
  })

  it('signs out', async () => {
    const { client } = await signUp(server)
    expect((await client.post('/api/auth/logout')).status).toBe(204)
    expect((await client.get('/api/me')).status).toBe(401)
  })

  it('changes the password, ends other sessions and keeps this one', async () => {
    const { client, email } = await signUp(server)
    const otherDevice = new Client(server.url, uniqueAddress())
    expect((await otherDevice.post('/api/auth/login', { email, password: PASSWORD })).status).toBe(200)

    const wrongCurrent = await client.post('/api/auth/password', { currentPassword: 'nope', newPassword: 'a brand new passphrase' })
    expect(wrongCurrent.status).toBe(422)
    expect(wrongCurrent.body.data.fieldErrors.currentPassword).toBeDefined()

    const changed = await client.post('/api/auth/password', { currentPassword: PASSWORD, newPassword: 'a brand new passphrase' })
    expect(changed.status).toBe(200)
    expect((await client.get('/api/me')).status).toBe(200)
    expect((await otherDevice.get('/api/me')).status).toBe(401)
    expect((await new Client(server.url, uniqueAddress()).post('/api/auth/login', { email, password: PASSWORD })).status).toBe(401)
    expect((await new Client(server.url, uniqueAddress()).post('/api/auth/login', { email, password: 'a brand new passphrase' })).status).toBe(200)
  })
})

describe('session cookie in production', () => {
  it('is Secure unless configured otherwise', async () => {
    const prod = await startServer({ env: { NUXT_SESSION_COOKIE_SECURE: undefined } })
    try {
      const res = await new Client(prod.url).post('/api/auth/signup', { organisation: 'Secure Co', name: 'S', email: uniqueEmail('secure'), password: PASSWORD })
      expect(res.status).toBe(201)
      expect(res.headers.getSetCookie().find(c => c.startsWith('fourfold-session='))).toMatch(/;\s*Secure/i)
    }
    finally {
      await prod.stop()
    }
  })
})
