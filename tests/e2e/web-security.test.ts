// Web security over HTTP against the built server: the security headers on a page, an API answer
// and a static file; the Content-Security-Policy itself; changes from another site refused
// (OWASP ASVS 5.0 §3.5 "Browser Origin Separation"); the session cookie's attributes; and sign-out
// ending the session for every copy of its cookie.
// Header meanings: CSP Level 3 (W3C), RFC 6797 (HSTS), the Fetch standard (X-Content-Type-Options,
// Origin), RFC 7034 (X-Frame-Options), W3C Referrer Policy.
import { request as httpRequest } from 'node:http'
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { Client, uniqueAddress } from '../support/http'
import { PASSWORD, signUp, uniqueEmail } from '../support/accounts'
import { photoForm } from '../support/photos'
import { routeFiles, routeKey } from '../support/route-matrix'

let server: TestServer
// Run as in production: reached over https (NUXT_APP_URL) and no Secure-cookie override.
let production: TestServer
beforeAll(async () => {
  ;[server, production] = await Promise.all([
    startServer(),
    startServer({ env: { NUXT_APP_URL: 'https://fourfold.test', NUXT_SESSION_COOKIE_SECURE: undefined } }),
  ])
})
afterAll(async () => {
  await Promise.all([server?.stop(), production?.stop()])
})

/** The policy as directive → sources. */
function parsePolicy(header: string | null): Map<string, string[]> {
  const policy = new Map<string, string[]>()
  for (const part of (header ?? '').split(';')) {
    const [name, ...sources] = part.trim().split(/\s+/)
    if (name) policy.set(name.toLowerCase(), sources)
  }
  return policy
}

async function page(base: string, path = '/sign-in') {
  const res = await fetch(base + path, { redirect: 'manual' })
  return { res, html: await res.text() }
}

/** A raw request with a Host header of our choosing (fetch does not let a test set Host). */
function rawPost(base: string, path: string, headers: Record<string, string>, body = '{}'): Promise<{ status: number, text: string }> {
  const url = new URL(base + path)
  return new Promise((resolve, reject) => {
    const req = httpRequest({ host: url.hostname, port: url.port, path: url.pathname, method: 'POST', headers: { 'content-type': 'application/json', 'content-length': String(Buffer.byteLength(body)), 'x-forwarded-for': uniqueAddress(), ...headers } }, (res) => {
      let text = ''
      res.setEncoding('utf8')
      res.on('data', (chunk: string) => (text += chunk))
      res.on('end', () => resolve({ status: res.statusCode ?? 0, text }))
    })
    req.on('error', reject)
    req.end(body)
  })
}

const FOREIGN = 'https://elsewhere.example'

describe('security headers', () => {
  it('a page carries a policy of its own origin only, with a fresh nonce on every inline script and style', async () => {
    const { res, html } = await page(server.url)
    expect(res.status).toBe(200)
    const policy = parsePolicy(res.headers.get('content-security-policy'))
    const nonce = /'nonce-([^']+)'/.exec(res.headers.get('content-security-policy') ?? '')?.[1]
    expect(nonce).toBeTruthy()
    expect(policy.get('default-src')).toEqual(['\'self\''])
    expect(policy.get('script-src')).toEqual(['\'self\'', `'nonce-${nonce}'`])
    expect(policy.get('style-src')).toEqual(['\'self\'', `'nonce-${nonce}'`])
    expect(policy.get('script-src-attr')).toEqual(['\'none\''])
    expect(policy.get('frame-ancestors')).toEqual(['\'none\''])
    expect(policy.get('object-src')).toEqual(['\'none\''])
    expect(policy.get('base-uri')).toEqual(['\'none\''])
    for (const directive of ['connect-src', 'font-src', 'manifest-src', 'worker-src', 'form-action']) {
      expect(policy.get(directive), directive).toEqual(['\'self\''])
    }
    // Tablet photos are object URLs of IndexedDB blobs; the drawn signature is a PNG data URL.
    expect(policy.get('img-src')).toEqual(['\'self\'', 'blob:', 'data:'])
    // No other origin anywhere, no inline or eval'd script, no wildcard.
    for (const [directive, sources] of policy) {
      for (const source of sources) {
        expect(source, `${directive} ${source}`).not.toMatch(/^(https?:|wss?:|\*)|\.[a-z]{2,}|unsafe-eval|unsafe-hashes/)
        if (directive.startsWith('script')) expect(source, directive).not.toBe('\'unsafe-inline\'')
      }
    }
    // Plain http here: no upgrade to https, no HSTS.
    expect(policy.has('upgrade-insecure-requests')).toBe(false)
    expect(res.headers.get('strict-transport-security')).toBeNull()

    // Every script and inline style tag Nuxt rendered carries this response's nonce.
    const scripts = html.match(/<script\b[^>]*>/g) ?? []
    const styles = html.match(/<style\b[^>]*>/g) ?? []
    expect(scripts.length).toBeGreaterThanOrEqual(2)
    expect(html).toContain('window.__NUXT__')
    for (const tag of [...scripts, ...styles]) expect(tag).toContain(`nonce="${nonce}"`)
    // A nonce is good for one response only.
    const again = await page(server.url)
    expect(again.res.headers.get('content-security-policy')).not.toContain(nonce)
  })

  it('a page also says nosniff, no referrer, and may not be framed (X-Frame-Options for older browsers)', async () => {
    for (const path of ['/sign-in', '/app-shell']) {
      const { res } = await page(server.url, path)
      expect(res.status, path).toBe(200)
      expect(res.headers.get('x-content-type-options')).toBe('nosniff')
      expect(res.headers.get('referrer-policy')).toBe('no-referrer')
      expect(res.headers.get('x-frame-options')).toBe('DENY')
      expect(res.headers.get('content-security-policy')).toMatch(/'nonce-[A-Za-z0-9+/=]+'/)
      expect(res.headers.get('x-powered-by')).toBeNull()
    }
  })

  it('a redirect from route middleware carries the real nonce, not the placeholder', async () => {
    const { res } = await page(server.url, '/')
    expect(res.status).toBe(302)
    expect(res.headers.get('content-security-policy')).not.toContain('{{nonce}}')
    expect(res.headers.get('x-frame-options')).toBe('DENY')
  })

  it('an API answer is nosniff, no referrer, not framable, and loads nothing if opened as a page', async () => {
    const res = await fetch(`${server.url}/api/health`)
    expect(res.status).toBe(200)
    expect(res.headers.get('x-content-type-options')).toBe('nosniff')
    expect(res.headers.get('referrer-policy')).toBe('no-referrer')
    expect(res.headers.get('x-frame-options')).toBe('DENY')
    expect(parsePolicy(res.headers.get('content-security-policy'))).toEqual(new Map([['default-src', ['\'none\'']], ['frame-ancestors', ['\'none\'']]]))
  })

  it('a static file (script, icon, service worker) is nosniff, no referrer, not framable', async () => {
    const { html } = await page(server.url)
    const script = /<script[^>]+src="(\/_nuxt\/[^"]+\.js)"/.exec(html)?.[1]
    expect(script).toBeTruthy()
    for (const path of [script!, '/fourfold.svg', '/sw.js', '/manifest.webmanifest']) {
      const res = await fetch(server.url + path)
      expect(res.status, path).toBe(200)
      expect(res.headers.get('x-content-type-options'), path).toBe('nosniff')
      expect(res.headers.get('referrer-policy'), path).toBe('no-referrer')
      expect(res.headers.get('x-frame-options'), path).toBe('DENY')
      // The service worker's own policy would come from these headers: none is set, so it may fetch.
      if (path === '/sw.js') expect(res.headers.get('content-security-policy')).toBeNull()
    }
  })

  it('a served photo keeps its own stricter headers (sandboxed, nosniff)', async () => {
    const { client } = await signUp(server)
    const uploaded = await client.post('/api/uploads', photoForm())
    expect(uploaded.status).toBe(201)
    const photo = await client.get(uploaded.body.url)
    expect(photo.status).toBe(200)
    expect(photo.headers.get('content-security-policy')).toBe('default-src \'none\'; sandbox')
    expect(photo.headers.get('x-content-type-options')).toBe('nosniff')
  })

  it('reached over https (NUXT_APP_URL), every response carries HSTS and pages upgrade insecure requests', async () => {
    const { res } = await page(production.url)
    expect(parsePolicy(res.headers.get('content-security-policy')).has('upgrade-insecure-requests')).toBe(true)
    for (const path of ['/sign-in', '/api/health', '/fourfold.svg']) {
      const answer = await fetch(production.url + path)
      // RFC 6797 §6.1: max-age in seconds; a year, subdomains included (ASVS 5.0 V3.4.1, from memory).
      expect(answer.headers.get('strict-transport-security'), path).toBe('max-age=31536000; includeSubDomains')
    }
  })
})

describe('changes from another site (OWASP ASVS 5.0 §3.5)', () => {
  const changingRoutes = routeFiles().map(routeKey).filter(key => !key.startsWith('GET ')).sort()

  it('every state-changing route refuses a foreign Origin with 403 and says why, even signed in', async () => {
    const { client } = await signUp(server)
    expect(changingRoutes.length).toBeGreaterThan(20)
    for (const key of changingRoutes) {
      const [method, template] = key.split(' ') as [string, string]
      const path = template.replace(/\[[^\]]+\]/g, randomUUID())
      const res = await client.request(method, path, {}, { origin: FOREIGN })
      expect(res.status, key).toBe(403)
      expect(res.body?.data?.message, key).toContain(`another site (${FOREIGN})`)
    }
    // nuxt-auth-utils' own session route too, and the opaque origin a sandboxed frame sends.
    expect((await client.request('DELETE', '/api/_auth/session', undefined, { origin: FOREIGN })).status).toBe(403)
    expect((await client.request('POST', '/api/work-areas', { name: 'x' }, { origin: 'null' })).status).toBe(403)
    // None of it took effect: still signed in, no work area made.
    expect((await client.get('/api/me')).status).toBe(200)
    expect((await client.get('/api/work-areas')).body).toEqual([])
  })

  it('without Origin, a browser\'s Sec-Fetch-Site: cross-site is refused the same way', async () => {
    const { client } = await signUp(server)
    for (const site of ['cross-site', 'same-site']) {
      const res = await client.request('POST', '/api/work-areas', { name: `Area ${site}` }, { 'sec-fetch-site': site })
      expect(res.status, site).toBe(403)
      expect(res.body.data.message).toContain('another site')
    }
    expect((await client.request('POST', '/api/work-areas', { name: 'Area same-origin' }, { 'sec-fetch-site': 'same-origin' })).status).toBe(201)
  })

  it('accepts the app\'s own origin (NUXT_APP_URL): sign-in, a change, a sync push, sign-out', async () => {
    const own = { 'origin': server.url, 'sec-fetch-site': 'same-origin' }
    const email = uniqueEmail('own')
    const client = new Client(server.url, uniqueAddress())
    const signedUp = await client.request('POST', '/api/auth/signup', { organisation: 'Own Origin', name: 'O', email, password: PASSWORD }, own)
    expect(signedUp.status).toBe(201)
    expect((await client.request('POST', '/api/auth/login', { email, password: PASSWORD }, own)).status).toBe(200)
    expect((await client.request('POST', '/api/work-areas', { name: 'Packing' }, own)).status).toBe(201)
    const sync = await client.request('POST', '/api/sync', { deviceId: randomUUID(), lessons: [], events: [], checks: [] }, own)
    expect(sync.status).toBe(200)
    expect((await client.request('POST', '/api/auth/logout', undefined, own)).status).toBe(204)
  })

  it('accepts the address the request was sent to (another name for the server), refuses any other', async () => {
    const port = new URL(server.url).port
    const host = `fourfold.internal:${port}`
    const body = JSON.stringify({ email: uniqueEmail('nobody'), password: 'whatever passphrase' })
    const same = await rawPost(server.url, '/api/auth/login', { host, origin: `http://${host}` }, body)
    expect(same.status, same.text).toBe(401)
    const other = await rawPost(server.url, '/api/auth/login', { host, origin: `http://elsewhere.internal:${port}` }, body)
    expect(other.status).toBe(403)
  })

  it('keeps working for clients that are not browsers (no Origin, no Sec-Fetch-Site): tablets, scripts', async () => {
    const { client } = await signUp(server)
    expect((await client.post('/api/work-areas', { name: 'Dispatch' })).status).toBe(201)
    expect((await client.post('/api/sync', { deviceId: randomUUID(), lessons: [], events: [], checks: [] })).status).toBe(200)
  })
})

describe('the session cookie', () => {
  function sessionCookie(res: { headers: Headers }): string {
    const cookie = res.headers.getSetCookie().find(c => c.startsWith('fourfold-session='))
    expect(cookie).toBeTruthy()
    return cookie!
  }

  it('is HttpOnly, SameSite=Lax and lasts twelve hours (runtimeConfig.session.maxAge)', async () => {
    const client = new Client(server.url, uniqueAddress())
    const res = await client.post('/api/auth/signup', { organisation: 'Cookie Org', name: 'C', email: uniqueEmail('cookie'), password: PASSWORD })
    const cookie = sessionCookie(res)
    expect(cookie).toMatch(/;\s*HttpOnly/i)
    expect(cookie).toMatch(/;\s*SameSite=Lax/i)
    expect(cookie).toMatch(/;\s*Path=\//i)
    const expires = Date.parse(/;\s*Expires=([^;]+)/i.exec(cookie)![1]!)
    expect(Math.abs(expires - (Date.now() + 12 * 3600_000))).toBeLessThan(60_000)
    // The test servers switch Secure off (NUXT_SESSION_COOKIE_SECURE=false) to work over http.
    expect(cookie).not.toMatch(/;\s*Secure/i)
  })

  it('is Secure in a production build without that override', async () => {
    const client = new Client(production.url, uniqueAddress())
    const res = await client.post('/api/auth/signup', { organisation: 'Secure Org', name: 'S', email: uniqueEmail('secure'), password: PASSWORD })
    expect(res.status).toBe(201)
    const cookie = sessionCookie(res)
    expect(cookie).toMatch(/;\s*Secure/i)
    expect(cookie).toMatch(/;\s*HttpOnly/i)
    expect(cookie).toMatch(/;\s*SameSite=Lax/i)
  })
})

describe('signing out', () => {
  it('ends the session: a copy of the cookie taken before no longer works', async () => {
    const { client } = await signUp(server)
    const copy = client.clone()
    expect((await copy.get('/api/me')).status).toBe(200)
    expect((await client.post('/api/auth/logout')).status).toBe(204)
    const replayed = await copy.get('/api/me')
    expect(replayed.status).toBe(401)
    expect(replayed.body.data.message).toBe('Your session has ended. Sign in again.')
    expect((await copy.clone().post('/api/work-areas', { name: 'After sign-out' })).status).toBe(401)
  })

  it('ends only that session: the same person signed in on another tablet stays signed in', async () => {
    const { client, email } = await signUp(server)
    const otherTablet = new Client(server.url, uniqueAddress())
    expect((await otherTablet.post('/api/auth/login', { email, password: PASSWORD })).status).toBe(200)
    expect((await client.post('/api/auth/logout')).status).toBe(204)
    expect((await otherTablet.get('/api/me')).status).toBe(200)
  })

  it('the module\'s own DELETE /api/_auth/session (the app calls it after signing out) ends it too', async () => {
    const { client } = await signUp(server)
    const copy = client.clone()
    expect((await client.delete('/api/_auth/session')).status).toBe(200)
    expect((await copy.get('/api/me')).status).toBe(401)
  })

  it('signing in over another session starts a new one: nothing, not even its start time, carries over', async () => {
    const first = await signUp(server)
    const second = await signUp(server)
    const before = (await first.client.get('/api/_auth/session')).body
    expect(before.sessionId).toBeTruthy()
    await new Promise(r => setTimeout(r, 2100))
    const signedIn = await first.client.post('/api/auth/login', { email: second.email, password: PASSWORD })
    expect(signedIn.status).toBe(200)
    const after = (await first.client.get('/api/_auth/session')).body
    expect(after.user.email).toBe(second.email)
    // h3's own session id and creation time (from which the 12 hours count) are new as well.
    expect(after.id).not.toBe(before.id)
    expect(after.sessionId).not.toBe(before.sessionId)
    const cookie = signedIn.headers.getSetCookie().filter(c => /^fourfold-session=[^;]+/.test(c)).pop()!
    // Expires is written in whole seconds; a carried-over start would be 2.1 s or more earlier.
    const expires = Date.parse(/;\s*Expires=([^;]+)/i.exec(cookie)![1]!)
    expect(Math.abs(expires - (Date.now() + 12 * 3600_000))).toBeLessThan(1500)
  })

  it('signing in over another session (a shared tablet) ends the earlier one', async () => {
    const first = await signUp(server)
    const second = await signUp(server)
    const earlier = first.client.clone()
    expect((await first.client.post('/api/auth/login', { email: second.email, password: PASSWORD })).status).toBe(200)
    expect((await first.client.get('/api/me')).body.user.email).toBe(second.email)
    expect((await earlier.get('/api/me')).status).toBe(401)
  })
})
