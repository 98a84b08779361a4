// The network drops in the middle of a sync. A raw socket plays the tablet: it sends part of a
// POST /api/sync body and the connection dies, or it sends all of it and the connection dies
// before the answer comes back. Then the tablet sends the same push again (same ids), as
// useSync does by itself: exactly one copy of everything, whether the server had merged it or not.
import { randomUUID } from 'node:crypto'
import { connect } from 'node:net'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { PASSWORD, addMember, signUp } from '../support/accounts'
import { cleanTryout, publishedJob, rosterLearner } from '../support/breakdowns'
import { uniqueAddress } from '../support/http'
import { sql } from '../support/db'

let server: TestServer
let coach: Awaited<ReturnType<typeof addMember>>
let job: Awaited<ReturnType<typeof publishedJob>>
let learnerId: string
let cookie: string
const address = uniqueAddress()

beforeAll(async () => {
  server = await startServer()
  const admin = (await signUp(server)).client
  coach = await addMember(server, admin, 'coach')
  job = await publishedJob(admin)
  learnerId = await rosterLearner(coach.client)
  // The raw socket needs the session cookie itself.
  const login = await fetch(`${server.url}/api/auth/login`, { method: 'POST', headers: { 'content-type': 'application/json', 'x-forwarded-for': address }, body: JSON.stringify({ email: coach.email, password: PASSWORD }) })
  expect(login.status).toBe(200)
  cookie = login.headers.getSetCookie().map(line => line.split(';')[0]).join('; ')
})
afterAll(() => server?.stop())

/** A lesson with a few thousand marks: a body of several hundred KiB, so it crosses many TCP segments. */
function bigPush(deviceId: string, tryouts = 150) {
  const lessonId = randomUUID()
  const events = Array.from({ length: tryouts }, (_, i) => cleanTryout(lessonId, deviceId, job.content, i * 20 + 1, 10_000 + i * 20)).flat()
  return {
    deviceId,
    lessons: [{ id: lessonId, coachUserId: coach.userId, learnerId, jobId: job.jobId, versionId: job.versionId, startedAt: 1, updatedAt: 2 }],
    events,
    checks: [],
  }
}

/**
 * Opens a connection, sends the request head and `sendBytes` of the body, then destroys the
 * connection without reading any answer. `chunked` sends the body with Transfer-Encoding: chunked
 * (no Content-Length), the other way a client may send it.
 */
async function dropMidRequest(body: Buffer, sendBytes: number, options: { chunked?: boolean } = {}) {
  const { port } = new URL(server.url)
  const socket = connect(Number(port), '127.0.0.1')
  await new Promise<void>((resolve, reject) => {
    socket.once('connect', resolve)
    socket.once('error', reject)
  })
  socket.on('error', () => undefined)
  const head = [
    'POST /api/sync HTTP/1.1',
    `Host: 127.0.0.1:${port}`,
    'Content-Type: application/json',
    options.chunked ? 'Transfer-Encoding: chunked' : `Content-Length: ${body.length}`,
    `Cookie: ${cookie}`,
    `X-Forwarded-For: ${address}`,
    '', '',
  ].join('\r\n')
  const part = body.subarray(0, sendBytes)
  const payload = options.chunked ? Buffer.concat([Buffer.from(`${part.length.toString(16)}\r\n`), part, Buffer.from('\r\n')]) : part
  await new Promise<void>(resolve => socket.write(Buffer.concat([Buffer.from(head), payload]), () => resolve()))
  // Let the server take in what was sent before the line goes dead.
  await new Promise(r => setTimeout(r, 300))
  socket.destroy()
}

async function storedOf(lessonId: string) {
  const r = await sql(server.databaseUrl, 'select count(*) as n, count(distinct id) as d from lesson_events where lesson_id = ?', [lessonId])
  const lessons = await sql(server.databaseUrl, 'select count(*) as n from lessons where id = ?', [lessonId])
  return { events: Number(r.rows[0]!.n), distinct: Number(r.rows[0]!.d), lessons: Number(lessons.rows[0]!.n) }
}

async function expectHealthy() {
  expect((await fetch(`${server.url}/api/health`)).status).toBe(200)
}

describe('the network dropping in the middle of a sync', () => {
  it('merges nothing of a push cut off halfway, and takes the full retry exactly once', async () => {
    const p = bigPush(randomUUID())
    const body = Buffer.from(JSON.stringify(p))
    expect(body.length).toBeGreaterThan(300_000)
    await dropMidRequest(body, Math.floor(body.length / 2))
    await expectHealthy()
    expect(await storedOf(p.lessons[0]!.id)).toEqual({ events: 0, distinct: 0, lessons: 0 })

    const retry = await coach.client.post('/api/sync', p)
    expect(retry.status, retry.text).toBe(200)
    expect(retry.body.rejected).toEqual([])
    expect(await storedOf(p.lessons[0]!.id)).toEqual({ events: p.events.length, distinct: p.events.length, lessons: 1 })
  })

  it('does the same for a chunked push cut off halfway', async () => {
    const p = bigPush(randomUUID(), 40)
    const body = Buffer.from(JSON.stringify(p))
    await dropMidRequest(body, Math.floor(body.length / 2), { chunked: true })
    await expectHealthy()
    expect(await storedOf(p.lessons[0]!.id)).toEqual({ events: 0, distinct: 0, lessons: 0 })
    const retry = await coach.client.post('/api/sync', p)
    expect(retry.status, retry.text).toBe(200)
    expect(await storedOf(p.lessons[0]!.id)).toEqual({ events: p.events.length, distinct: p.events.length, lessons: 1 })
  })

  it('accepts the retry of a push the server committed but whose answer was lost, as no-ops', async () => {
    const p = bigPush(randomUUID())
    const body = Buffer.from(JSON.stringify(p))
    // All of it arrives; the line dies before the answer is read.
    await dropMidRequest(body, body.length)
    // The server finishes the merge on its own: wait until it is in.
    await expect.poll(() => storedOf(p.lessons[0]!.id), { timeout: 30_000, interval: 200 }).toEqual({ events: p.events.length, distinct: p.events.length, lessons: 1 })

    const retry = await coach.client.post('/api/sync', p)
    expect(retry.status, retry.text).toBe(200)
    expect(retry.body.rejected).toEqual([])
    expect(new Set(retry.body.accepted)).toEqual(new Set([p.lessons[0]!.id, ...p.events.map(e => e.id)]))
    // The scores that answer carried reach the tablet with its next pull.
    const pulled = await coach.client.get('/api/sync?since=0')
    expect(pulled.body.lessons.find((l: { id: string }) => l.id === p.lessons[0]!.id)?.score?.recall).toBe(100)
    expect(await storedOf(p.lessons[0]!.id)).toEqual({ events: p.events.length, distinct: p.events.length, lessons: 1 })
  })

  it('logged no unhandled server error for any of the dropped connections', () => {
    expect(server.output()).not.toMatch(/\[request error\]|\[unhandled\]/)
  })
})
