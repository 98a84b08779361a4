// Sign-in throttling: after 10 failures in 15 minutes, 429 with Retry-After, per account and per address.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { Client, uniqueAddress } from '../support/http'
import { PASSWORD, signUp, uniqueEmail } from '../support/accounts'

let server: TestServer
beforeAll(async () => {
  server = await startServer()
})
afterAll(() => server?.stop())

describe('sign-in throttling', () => {
  it('answers 429 with Retry-After on the 11th try at one account, even from new addresses and with the right password', async () => {
    const { email } = await signUp(server)
    for (let i = 0; i < 10; i++) {
      const res = await new Client(server.url, uniqueAddress()).post('/api/auth/login', { email, password: `wrong ${i}` })
      expect(res.status).toBe(401)
    }
    const blocked = await new Client(server.url, uniqueAddress()).post('/api/auth/login', { email, password: PASSWORD })
    expect(blocked.status).toBe(429)
    const retryAfter = Number(blocked.headers.get('retry-after'))
    expect(retryAfter).toBeGreaterThan(0)
    expect(retryAfter).toBeLessThanOrEqual(15 * 60)
    expect(blocked.body.message).toMatch(/Too many failed sign-ins/)
  })

  it('answers 429 to one address that fails across many accounts, and not to others', async () => {
    const address = uniqueAddress()
    for (let i = 0; i < 10; i++) {
      const res = await new Client(server.url, address).post('/api/auth/login', { email: uniqueEmail('guess'), password: 'guess' })
      expect(res.status).toBe(401)
    }
    const { email } = await signUp(server)
    expect((await new Client(server.url, address).post('/api/auth/login', { email, password: PASSWORD })).status).toBe(429)
    expect((await new Client(server.url, uniqueAddress()).post('/api/auth/login', { email, password: PASSWORD })).status).toBe(200)
  })

  it('clears an account\'s failures after a successful sign-in', async () => {
    const { email } = await signUp(server)
    for (let i = 0; i < 9; i++) await new Client(server.url, uniqueAddress()).post('/api/auth/login', { email, password: 'wrong' })
    expect((await new Client(server.url, uniqueAddress()).post('/api/auth/login', { email, password: PASSWORD })).status).toBe(200)
    for (let i = 0; i < 9; i++) {
      expect((await new Client(server.url, uniqueAddress()).post('/api/auth/login', { email, password: 'wrong' })).status).toBe(401)
    }
  })
})
