// Two built servers on one SQLite file (DESIGN.md §5, several app instances), tablets syncing lessons
// on both at once while the plan and the records are read on both: no 5xx, and afterwards the file
// holds exactly what the servers acknowledged — nothing lost, nothing doubled, nothing that was not
// acknowledged. A shortened run of npm run bench:load's accounting (tests/bench/lib: the same
// simulated tablets and the same check of the file); the figures belong to the benchmark, this only
// asserts the guarantee.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { TestServer } from '../support/server'
import { startTwoServers, type TwoServers } from '../support/two-servers'
import { PASSWORD, addMember, signUp } from '../support/accounts'
import { publishedJob, rosterLearner } from '../support/breakdowns'
import { uniqueAddress } from '../support/http'
import { runTablets } from '../bench/lib/load-tablets.mjs'
import { verifyDatabase } from '../bench/lib/load-verify.mjs'
import { breakdownContent } from '../bench/lib/sync-records.mjs'

const TABLETS = 6
const RUN_MS = 6000
const EVENTS_PER_PUSH = 120

let servers: TwoServers
let a: TestServer
let b: TestServer

/** Signs `email` in on `server` and returns the session cookie as "name=value". */
async function sessionOn(server: TestServer, email: string) {
  const res = await fetch(`${server.url}/api/auth/login`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-forwarded-for': uniqueAddress() },
    body: JSON.stringify({ email, password: PASSWORD }),
  })
  const cookie = res.headers.getSetCookie().map(c => c.split(';')[0]!).find(c => c.startsWith('fourfold-session='))
  if (res.status !== 200 || !cookie) throw new Error(`sign-in on ${server.url}: ${res.status} ${await res.text()}`)
  return cookie
}

/** GET loops on the plan and the records of every server until `until`; every answer that was not 2xx. */
async function readUntil(servers: TestServer[], cookie: (s: TestServer) => string, until: number) {
  const failures: string[] = []
  let answers = 0
  await Promise.all(servers.flatMap(server => ['/api/plan', '/api/records'].map(async (path) => {
    while (Date.now() < until) {
      const res = await fetch(`${server.url}${path}`, { headers: { cookie: cookie(server) } }).catch((error: Error) => ({ status: 0, text: async () => error.message }))
      answers++
      if (res.status < 200 || res.status >= 300) failures.push(`${path} on ${server.url}: ${res.status} ${(await res.text()).slice(0, 300)}`)
      else await (res as Response).arrayBuffer()
    }
  })))
  return { answers, failures }
}

beforeAll(async () => {
  servers = await startTwoServers('two-instances')
  a = servers.a
  b = servers.b
}, 120_000)

afterAll(() => servers?.stop())

describe('two app processes on one database file under sync load', () => {
  it('answer every push and read without a 5xx, and the file holds exactly the acknowledged events', async () => {
    const admin = await signUp(a, 'Two Ovens Bakery')
    const job = await publishedJob(admin.client, breakdownContent(), 'Clean the dough divider')
    const learnerIds = [await rosterLearner(admin.client, 'Ilse Brannagh'), await rosterLearner(admin.client, 'Tomasz Weller'), await rosterLearner(admin.client, 'Ama Osei')]
    const tablets = []
    for (let i = 0; i < TABLETS; i++) {
      const coach = await addMember(a, admin.client, 'coach')
      const server = i % 2 ? b : a
      tablets.push({ label: i % 2 ? 'B' : 'A', url: server.url, cookie: await sessionOn(server, coach.email), ids: { coachUserId: coach.userId, jobId: job.jobId, versionId: job.versionId }, learnerIds, seed: 0x2AB1E7 + i })
    }
    const readers = new Map([[a, await sessionOn(a, admin.email)], [b, await sessionOn(b, admin.email)]])

    const startAt = Date.now() + 500
    const [run, reads] = await Promise.all([
      runTablets({ tablets, content: job.content, eventsPerPush: EVENTS_PER_PUSH, startAt, durationMs: RUN_MS, threads: 1, graceMs: 10_000 }),
      readUntil([a, b], s => readers.get(s)!, startAt + RUN_MS),
    ])
    // Every push had its answer before the servers stop; then the file is read on its own.
    await b.stop()
    await a.stop()
    const check = await verifyDatabase(a.databaseUrl, run.ledger, admin.organisationId)
    const summary = { pushes: run.pushesSent, answered: run.pushesSettled, events: check.events.rows, reads: reads.answers, failures: run.failures.slice(0, 3), readFailures: reads.failures.slice(0, 3) }
    console.info(`[two-instances] ${JSON.stringify(summary)}`)

    // Both servers took pushes, and every push was answered 2xx the first time.
    expect(run.pushesSent).toBeGreaterThan(TABLETS * 2)
    expect(run.failures, JSON.stringify(run.failures.slice(0, 3))).toEqual([])
    expect(run.pushesSettled).toBe(run.pushesSent)
    expect(run.rejectedCount).toBe(0)
    expect(run.unanswered).toBe(0)
    expect(reads.failures).toEqual([])
    expect(reads.answers).toBeGreaterThan(4)
    // The file: every acknowledged event and lesson there once, as sent; nothing else.
    expect(check.events.acknowledged).toBe(run.pushesSent * EVENTS_PER_PUSH)
    expect(check.events.rows).toBe(check.events.acknowledged)
    expect(check.lost).toBe(0)
    expect(check.doubled).toBe(0)
    expect(check.unexplained).toBe(0)
    expect(check.lessons.rows).toBe(check.lessons.acknowledged)
  }, 120_000)
})
