// Another process holds the database's write lock (here this test process, in BEGIN IMMEDIATE on
// the server's SQLite file, as a second app instance in a long write or a sqlite3 shell would):
// write routes answer 503 with Retry-After and words a person can act on, reads still answer,
// nothing saved before is lost; released, the tablet's retry of the refused push is accepted and
// nothing is doubled.
import { randomUUID } from 'node:crypto'
import { createClient, type Client as SqlClient, type Transaction } from '@libsql/client'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { addMember, signUp } from '../support/accounts'
import { cleanTryout, publishedJob, rosterLearner } from '../support/breakdowns'
import type { Client } from '../support/http'
import { sql } from '../support/db'

let server: TestServer
let admin: Client
let coach: Awaited<ReturnType<typeof addMember>>
let job: Awaited<ReturnType<typeof publishedJob>>
let learnerId: string
let holder: SqlClient | undefined
let held: Transaction | undefined

beforeAll(async () => {
  server = await startServer()
  admin = (await signUp(server)).client
  coach = await addMember(server, admin, 'coach')
  job = await publishedJob(admin)
  learnerId = await rosterLearner(coach.client)
})
afterAll(async () => {
  held?.close()
  holder?.close()
  await server?.stop()
})

function push(deviceId: string) {
  const lessonId = randomUUID()
  return {
    deviceId,
    lessons: [{ id: lessonId, coachUserId: coach.userId, learnerId, jobId: job.jobId, versionId: job.versionId, startedAt: 1, updatedAt: 2 }],
    events: cleanTryout(lessonId, deviceId, job.content),
    checks: [],
  }
}

async function counts() {
  const r = await sql(server.databaseUrl, 'select (select count(*) from lesson_events) as events, (select count(distinct id) from lesson_events) as distinct_events, (select count(*) from lessons) as lessons, (select count(*) from learners) as learners')
  const row = r.rows[0]!
  return { events: Number(row.events), distinctEvents: Number(row.distinct_events), lessons: Number(row.lessons), learners: Number(row.learners) }
}

describe('the database write lock held by another process', () => {
  it('answers writes 503 with Retry-After, keeps reads and saved data, and takes the retried push once the lock is free', async () => {
    const deviceId = randomUUID()
    const before = push(deviceId)
    const saved = await coach.client.post('/api/sync', before)
    expect(saved.status).toBe(200)
    const start = await counts()
    expect(start.events).toBe(before.events.length)

    holder = createClient({ url: server.databaseUrl })
    held = await holder.transaction('write')

    // The push meets the lock, waits the busy timeout (with the event loop free) and is refused:
    // not a 500, not a hang.
    const refused = push(deviceId)
    const t0 = Date.now()
    const order: string[] = []
    const waiting = coach.client.post('/api/sync', refused).then((res) => {
      order.push('write')
      return res
    })
    // A read sent while that write waits is answered first: the wait does not hold the event loop.
    await new Promise(r => setTimeout(r, 300))
    const read = await coach.client.get('/api/learners')
    order.push('read')
    expect(read.status).toBe(200)
    const busy = await waiting
    const firstMs = Date.now() - t0
    expect(order).toEqual(['read', 'write'])
    expect(busy.status, busy.text).toBe(503)
    expect(Number(busy.headers.get('retry-after'))).toBeGreaterThan(0)
    expect(busy.body.data.message).toMatch(/busy with other work.*nothing was changed.*try again in a few seconds/i)

    // Other write routes get the same answer (every write goes through the one queue), each within
    // its own busy timeout …
    const t1 = Date.now()
    const [learner, organisation] = await Promise.all([
      coach.client.post('/api/learners', { name: 'Tamsin Oake' }),
      admin.patch('/api/organisation', { name: 'Renamed while locked' }),
    ])
    const laterMs = Date.now() - t1
    for (const res of [learner, organisation]) {
      expect(res.status, res.text).toBe(503)
      expect(Number(res.headers.get('retry-after'))).toBeGreaterThan(0)
    }
    // … while reads go on: WAL readers never wait for the writer.
    expect((await coach.client.get('/api/learners')).status).toBe(200)
    const pulled = await coach.client.get('/api/sync?since=0')
    expect(pulled.status, `${pulled.text}\n${server.output().slice(-3000)}`).toBe(200)
    console.info(`[faults] write lock held: first refusal after ${firstMs} ms (busy timeout 5 s), two more writes at once refused in ${laterMs} ms`)

    await held.rollback()
    held = undefined
    // Nothing saved before was lost, and none of the refused writes went in.
    expect(await counts()).toEqual(start)

    // The tablet's retry: the whole refused push, the same ids, accepted once.
    const retried = await coach.client.post('/api/sync', refused)
    expect(retried.status, retried.text).toBe(200)
    expect(retried.body.rejected).toEqual([])
    expect(retried.body.accepted).toEqual(expect.arrayContaining([refused.lessons[0]!.id, ...refused.events.map(e => e.id)]))
    // Sent twice (the tablet did not hear the answer): still one copy of each.
    expect((await coach.client.post('/api/sync', refused)).status).toBe(200)
    const end = await counts()
    expect(end.events).toBe(before.events.length + refused.events.length)
    expect(end.distinctEvents).toBe(end.events)
    expect(end.lessons).toBe(2)
    // The other routes work again too.
    expect((await coach.client.post('/api/learners', { name: 'Tamsin Oake' })).status).toBe(201)
  })
})
