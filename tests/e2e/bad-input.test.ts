// Bad input gets 400/413/422 with a message a person can act on, never a 500, and saves nothing.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { request } from 'node:http'
import fc from 'fast-check'
import { startServer, type TestServer } from '../support/server'
import { Client, uniqueAddress } from '../support/http'
import { signUp } from '../support/accounts'
import { sql } from '../support/db'

let server: TestServer
let admin: Awaited<ReturnType<typeof signUp>>
beforeAll(async () => {
  server = await startServer()
  admin = await signUp(server)
})
afterAll(() => server?.stop())

function chunkedPost(url: string, path: string, chunks: number, chunkSize: number): Promise<{ status: number, body: string }> {
  return new Promise((resolve, reject) => {
    const req = request(`${url}${path}`, { method: 'POST', headers: { 'content-type': 'application/json', 'transfer-encoding': 'chunked' } }, (res) => {
      let body = ''
      res.on('data', d => (body += d))
      res.on('end', () => resolve({ status: res.statusCode ?? 0, body }))
    })
    req.on('error', (error) => {
      // The server may answer 413 and close before the whole body is written.
      if ((error as NodeJS.ErrnoException).code === 'EPIPE' || (error as NodeJS.ErrnoException).code === 'ECONNRESET') resolve({ status: 413, body: '' })
      else reject(error)
    })
    let sent = 0
    const write = () => {
      while (sent < chunks) {
        sent += 1
        if (!req.write('"' + 'x'.repeat(chunkSize - 2) + '"')) {
          req.once('drain', write)
          return
        }
      }
      req.end()
    }
    write()
  })
}

describe('bad input', () => {
  it('answers 413 to a body over the limit by Content-Length, before reading it', async () => {
    const res = await new Client(server.url, uniqueAddress()).post('/api/auth/signup', JSON.stringify({ organisation: 'x'.repeat(400_000) }))
    expect(res.status).toBe(413)
    expect(res.body.message).toMatch(/larger than the 256 KiB/)
  })

  it('answers 413 to a chunked body once it passes the limit', async () => {
    const res = await chunkedPost(server.url, '/api/auth/login', 64, 8192)
    expect(res.status).toBe(413)
  })

  it('reads a chunked body under the limit as usual', async () => {
    const res = await new Promise<number>((resolve, reject) => {
      const req = request(`${server.url}/api/auth/forgot`, { method: 'POST', headers: { 'content-type': 'application/json', 'transfer-encoding': 'chunked' } }, r => resolve(r.statusCode ?? 0))
      req.on('error', reject)
      req.write('{"email":')
      req.end('"someone@test.example"}')
    })
    expect(res).toBe(202)
  })

  it('answers 400 to JSON that does not parse, and 422 with field messages to the wrong shape', async () => {
    const client = new Client(server.url, uniqueAddress())
    const broken = await client.post('/api/auth/signup', '{"organisation": ')
    expect(broken.status).toBe(400)
    expect(broken.body.message).toBe('The request body is not valid JSON.')
    const notObject = await client.post('/api/auth/login', '[1,2,3]')
    expect([400, 422]).toContain(notObject.status)
    const wrong = await client.post('/api/auth/signup', { organisation: 5, name: null, email: 'x', password: [] })
    expect(wrong.status).toBe(422)
    expect(Object.keys(wrong.body.data.fieldErrors).sort()).toEqual(['email', 'name', 'organisation', 'password'])
  })

  it('answers 404 to malformed ids rather than failing', async () => {
    expect((await admin.client.patch('/api/members/not-a-uuid', { role: 'coach' })).status).toBe(404)
    expect((await admin.client.delete('/api/work-areas/%00%ff')).status).toBe(404)
  })

  it('answers a JSON 404 naming the path to an /api/ path no route answers, signed in or not', async () => {
    const anonymous = new Client(server.url, uniqueAddress())
    for (const [client, method, path] of [[anonymous, 'GET', '/api/no-such-thing'], [admin.client, 'GET', '/api/plan/extra/parts/here'], [admin.client, 'POST', '/api/lessons'], [anonymous, 'DELETE', '/api/health']] as const) {
      const res = await client.request(method, path, method === 'GET' || method === 'DELETE' ? undefined : {})
      expect(res.status, `${method} ${path}`).toBe(404)
      expect(res.headers.get('content-type'), `${method} ${path}`).toMatch(/application\/json/)
      expect(res.body.data.message).toBe(`No API route answers ${method} ${path}.`)
    }
    // Named routes still answer as before.
    expect((await anonymous.get('/api/health')).status).toBe(200)
    expect((await anonymous.get('/api/me')).status).toBe(401)
  })

  it('never answers 5xx to generated hostile bodies, and saves nothing from them', async () => {
    const before = await sql(server.databaseUrl, 'select (select count(*) from organisations) o, (select count(*) from users) u, (select count(*) from invites) i, (select count(*) from work_areas) w')
    const routes: Array<[string, string]> = [
      ['POST', '/api/auth/signup'], ['POST', '/api/auth/login'], ['POST', '/api/auth/forgot'], ['POST', '/api/auth/reset'],
      ['POST', '/api/invites'], ['POST', '/api/invites/accept'], ['POST', '/api/work-areas'], ['PATCH', '/api/organisation'],
      ['POST', '/api/auth/password'],
    ]
    const hostile = fc.oneof(
      fc.jsonValue(),
      fc.record({ email: fc.oneof(fc.string(), fc.integer(), fc.constant('a@b')), password: fc.oneof(fc.string({ maxLength: 300 }), fc.constant(null)), name: fc.oneof(fc.string({ minLength: 121, maxLength: 500 }), fc.object(), fc.integer()), role: fc.string(), token: fc.string(), organisation: fc.anything() }, { requiredKeys: [] }),
      fc.string().map(s => `{"email": ${s}`),
    )
    await fc.assert(fc.asyncProperty(fc.constantFrom(...routes), hostile, async ([method, path], body) => {
      const res = await admin.client.request(method, path, typeof body === 'string' ? body : JSON.stringify(body) ?? 'null')
      return res.status < 500
    }), { numRuns: 150 })
    const after = await sql(server.databaseUrl, 'select (select count(*) from organisations) o, (select count(*) from users) u, (select count(*) from invites) i, (select count(*) from work_areas) w')
    expect(after.rows[0]).toEqual(before.rows[0])
  })
})
