// SIGKILL the server in the middle of a large sync, restart it on the same database, let the
// client retry: every event the server acknowledged is there, and none is there twice.
import { randomBytes, randomUUID } from 'node:crypto'
import { mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { Client, uniqueAddress } from '../support/http'
import { PASSWORD, addMember, signUp } from '../support/accounts'
import { publishedJob, rosterLearner } from '../support/breakdowns'
import { sql } from '../support/db'

let dir: string
let server: TestServer | undefined
afterAll(async () => {
  await server?.stop()
  if (dir) await rm(dir, { recursive: true, force: true })
})

describe('sync survives a crash', () => {
  it('keeps every acknowledged event exactly once after SIGKILL and retry', async () => {
    dir = await mkdtemp(join(tmpdir(), 'fourfold-crash-'))
    const env = { NUXT_SESSION_PASSWORD: randomBytes(32).toString('hex') }
    server = await startServer({ dir, env })
    const admin = await signUp(server)
    const coach = await addMember(server, admin.client, 'coach')
    const job = await publishedJob(admin.client)
    const learnerId = await rosterLearner(coach.client)
    const deviceId = randomUUID()
    const steps = job.content.units[0]!.steps.map(s => s.id)

    // 12 pushes of 1,500 events, one lesson each, except a 15,000-event push in the middle
    // that is killed while it is being merged: 31,500 events in all.
    let seq = 0
    const pushes = Array.from({ length: 12 }, (_, p) => {
      const lessonId = randomUUID()
      return {
        deviceId,
        lessons: [{ id: lessonId, coachUserId: coach.userId, learnerId, jobId: job.jobId, versionId: job.versionId, startedAt: 1, updatedAt: 1 + p }],
        events: Array.from({ length: p === 5 ? 15_000 : 1500 }, (_, i) => {
          seq += 1
          return { id: randomUUID(), lessonId, pass: 'T1-1', elementId: steps[i % steps.length]!, kind: 'mark', value: ['unaided', 'cued', 'missed'][i % 3]!, clientTime: seq, deviceId, seq }
        }),
        checks: [],
      }
    })

    const acknowledged = new Set<string>()
    let killedDuring = -1
    for (const [i, push] of pushes.entries()) {
      const inFlight = coach.client.post('/api/sync', push)
      if (i === 5) {
        // Kill while this push is being merged.
        await new Promise(r => setTimeout(r, 30 + Math.floor(Math.random() * 60)))
        server.process.kill('SIGKILL')
        killedDuring = i
        // The push never got its answer, so the tablet keeps all of it to send again.
        expect(await inFlight.then(() => 'answered', () => 'cut off')).toBe('cut off')
        break
      }
      const res = await inFlight
      expect(res.status).toBe(200)
      for (const id of res.body.accepted) acknowledged.add(id)
    }
    expect(killedDuring).toBe(5)
    expect(acknowledged.size).toBe(5 * 1501)
    const proc = server.process
    if (proc.exitCode === null && proc.signalCode === null) await new Promise(r => proc.once('exit', r))

    // The same database, a new process; the tablet signs in again and sends everything not acknowledged.
    server = await startServer({ dir, env })
    const retry = new Client(server.url, uniqueAddress())
    expect((await retry.post('/api/auth/login', { email: coach.email, password: PASSWORD })).status).toBe(200)
    const present = new Set((await sql(server.databaseUrl, 'select id from lesson_events')).rows.map(r => r.id as string))
    // The killed push was one transaction: none of it, or all of it, is there.
    const killedIds = pushes[5]!.events.filter(e => present.has(e.id)).length
    expect([0, 15_000]).toContain(killedIds)
    const lessonIds = new Set(pushes.map(p => p.lessons[0]!.id))
    const missing = [...acknowledged].filter(id => !lessonIds.has(id) && !present.has(id))
    expect(missing).toEqual([])

    for (const push of pushes) {
      const res = await retry.post('/api/sync', push)
      expect(res.status).toBe(200)
      expect(res.body.rejected).toEqual([])
    }
    const total = await sql(server.databaseUrl, 'select count(*) as n, count(distinct id) as d from lesson_events')
    expect(Number(total.rows[0]!.n)).toBe(31_500)
    expect(Number(total.rows[0]!.d)).toBe(31_500)
    const scored = await sql(server.databaseUrl, 'select count(*) as n, sum(event_count) as e from lesson_scores')
    expect(Number(scored.rows[0]!.n)).toBe(12)
    expect(Number(scored.rows[0]!.e)).toBe(31_500)
  }, 180_000)
})
