// The once-a-day rule of the digest run (server/utils/digest.ts runDigests) against a real SQLite
// file with the committed migrations: two runs at once with no lease between them (as when a lease
// has expired under a slow run) still send one mail per person; a refused send waits in the mail
// outbox and goes once the mail server takes it, still once; a claim left by a crash is not sent again. The mail transport is a collector here
// (the e2e test tests/e2e/reminders.test.ts sends real SMTP to the capture server); Nitro's
// auto-imported helpers are supplied as the globals the build would import.
import { randomUUID } from 'node:crypto'
import { mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join, resolve } from 'node:path'
import { createClient, type Client } from '@libsql/client'
import { eq } from 'drizzle-orm'
import { drizzle } from 'drizzle-orm/libsql'
import { migrate } from 'drizzle-orm/libsql/migrator'
import { afterAll, beforeAll, beforeEach, describe, expect, it, vi } from 'vitest'
import * as schema from '../../server/db/schema'
import { serialiseWrite } from '../../server/utils/write-lock'
import { trainingRows } from '../../server/utils/training-state'
import { digestMail } from '../../server/utils/mail-templates'
import type { OutgoingMail } from '../../server/utils/mail'
import { runDigests } from '../../server/utils/digest'
import { deliverQueuedMail, queueMail } from '../../server/utils/mail-outbox'

const DAY = 86_400_000
let dir: string
let client: Client
let db: ReturnType<typeof drizzle<typeof schema>>
let sent: OutgoingMail[] = []
let refuse = new Set<string>()

const orgId = randomUUID()
const otherOrg = randomUUID()
const people = { admin: randomUUID(), anna: randomUUID(), ben: randomUUID() }
const now = new Date(2026, 11, 2, 6, 0).getTime()

beforeAll(async () => {
  // The mail outbox stamps and expires mail by the real clock (Date.now), the digest by the `now`
  // it is given: run the clock from `now` so a digest composed for 2 December is not already past
  // its end of day when the suite runs later (this failed CI on 3 December). Timers stay real: the
  // mail server's delay and the outbox's retry wait still run.
  vi.useFakeTimers({ now, toFake: ['Date'], shouldAdvanceTime: true })
  dir = await mkdtemp(join(tmpdir(), 'fourfold-digest-'))
  const url = `file:${join(dir, 'digest.db')}`
  client = createClient({ url, timeout: 5000 })
  db = drizzle(client, { schema })
  await migrate(db, { migrationsFolder: resolve('drizzle') })
  Object.assign(globalThis, {
    useDb: async () => db,
    serialiseWrite,
    trainingRows,
    digestMail,
    queueMail,
    deliverQueuedMail,
    appLink: (path: string) => `http://fourfold.example${path}`,
    useRuntimeConfig: () => ({}),
    // A mail server that takes its time (so two runs interleave) and refuses some addresses.
    sendMail: async (mail: OutgoingMail) => {
      await new Promise(r => setTimeout(r, 5))
      if (refuse.has(mail.to)) throw new Error('550 mailbox unavailable')
      sent.push(mail)
    },
  })

  const at = new Date(now - 10 * DAY)
  await db.insert(schema.organisations).values({ id: orgId, name: 'Crumbs & Co' })
  for (const [name, id] of Object.entries(people)) {
    await db.insert(schema.users).values({ id, email: `${name}@bakery.example`, name, passwordHash: 'x', passwordChangedAt: at })
    await db.insert(schema.memberships).values({ id: randomUUID(), organisationId: orgId, userId: id, role: name === 'admin' ? 'admin' : 'coach' })
  }
  const jobId = randomUUID()
  const versionId = randomUUID()
  await db.insert(schema.jobs).values({ id: jobId, organisationId: orgId, title: 'Change the slicer blade set' })
  await db.insert(schema.breakdownVersions).values({ id: versionId, organisationId: orgId, jobId, number: 1, status: 'published', content: { units: [] }, publishedAt: at })
  // Anna and Ben each signed off a learner as ready three days ago: a spot check is overdue for each.
  for (const coach of [people.anna, people.ben]) {
    const learnerId = randomUUID()
    await db.insert(schema.learners).values({ id: learnerId, organisationId: orgId, name: `Learner of ${coach === people.anna ? 'Anna' : 'Ben'}` })
    const signedOffAt = new Date(now - 3 * DAY)
    await db.insert(schema.lessons).values({ id: randomUUID(), organisationId: orgId, coachUserId: coach, learnerId, jobId, versionId, startedAt: signedOffAt, signedOffAt, decision: 'ready', clientUpdatedAt: signedOffAt.getTime(), updatedByDevice: randomUUID() })
  }

  // A second organisation: one coach, one plan item past its target date.
  const coachId = randomUUID()
  const learnerId = randomUUID()
  const otherJob = randomUUID()
  await db.insert(schema.organisations).values({ id: otherOrg, name: 'Second Bakehouse' })
  await db.insert(schema.users).values({ id: coachId, email: 'wren@second.example', name: 'Wren', passwordHash: 'x', passwordChangedAt: at })
  await db.insert(schema.memberships).values({ id: randomUUID(), organisationId: otherOrg, userId: coachId, role: 'coach' })
  await db.insert(schema.jobs).values({ id: otherJob, organisationId: otherOrg, title: 'Check-weigh a tray' })
  await db.insert(schema.learners).values({ id: learnerId, organisationId: otherOrg, name: 'Wen Harrow' })
  await db.insert(schema.planItems).values({ id: randomUUID(), organisationId: otherOrg, learnerId, jobId: otherJob, targetDate: '2026-11-20', reason: 'turnover' })
})
afterAll(async () => {
  vi.useRealTimers()
  client?.close()
  if (dir) await rm(dir, { recursive: true, force: true })
})
beforeEach(async () => {
  sent = []
  refuse = new Set()
  await db.delete(schema.mailOutbox)
  await db.delete(schema.digestSends)
})

const to = () => sent.map(m => m.to).sort()

describe('the digest run', () => {
  it('sends one mail per person when two runs go at the same moment with no lease between them', async () => {
    const [first, second] = await Promise.all([runDigests({ now }), runDigests({ now })])
    expect(to()).toEqual(['anna@bakery.example', 'ben@bakery.example', 'wren@second.example'])
    expect(first.sent + second.sent).toBe(3)
    // The admin taught nobody and nothing is late: nothing to say to them.
    expect(first.nothingToSay).toBe(1)
    const rows = await db.select().from(schema.digestSends)
    expect(rows).toHaveLength(3)
    expect(rows.every(r => r.day === '2026-12-02' && r.sentAt > 0)).toBe(true)
  })

  it('sends nothing more that day, and again the next day', async () => {
    await runDigests({ now })
    sent = []
    expect(await runDigests({ now: now + 6 * 60 * 60 * 1000 })).toMatchObject({ sent: 0, alreadySent: 3 })
    expect(sent).toEqual([])
    expect((await runDigests({ now: now + DAY })).sent).toBe(3)
  })

  it('keeps a digest the mail server refused in the outbox, sends it once the server takes it, and composes no second one', async () => {
    refuse.add('ben@bakery.example')
    expect(await runDigests({ now, organisationIds: [orgId] })).toMatchObject({ sent: 1, queued: 1 })
    expect(to()).toEqual(['anna@bakery.example'])
    const waiting = await db.select().from(schema.mailOutbox)
    expect(waiting.map(m => [m.kind, m.recipient, m.attempts])).toEqual([['digest', 'ben@bakery.example', 1]])
    // Ben's claim stays (sent_at 0): a later run composes nothing more for him.
    expect(await runDigests({ now, organisationIds: [orgId] })).toMatchObject({ sent: 0, queued: 0, alreadySent: 2 })
    refuse.clear()
    expect(await deliverQueuedMail({ ignoreBackoff: true })).toEqual({ sent: 1, notSent: 0 })
    expect(to()).toEqual(['anna@bakery.example', 'ben@bakery.example'])
    expect(await db.select().from(schema.mailOutbox)).toEqual([])
    const rows = await db.select().from(schema.digestSends)
    expect(rows.every(r => r.sentAt > 0)).toBe(true)
  })

  it('does not send again after a crash between the claim and the confirmation', async () => {
    // What a process that died mid-send leaves: a claim with sent_at 0, and its queued mail
    // claimed by the run that died (the claim has expired since).
    const claimId = randomUUID()
    await db.insert(schema.digestSends).values({ id: claimId, organisationId: orgId, userId: people.anna, day: '2026-12-02', sentAt: 0 })
    await db.insert(schema.mailOutbox).values({ id: randomUUID(), organisationId: orgId, kind: 'digest', recipient: 'anna@bakery.example', subject: 'Crumbs & Co', text: 'x', html: 'x', digestSendId: claimId, createdAt: now, expiresAt: Date.now() + DAY, nextAttemptAt: now, claimedBy: 'gone:1:x', claimedUntil: Date.now() - 1 })
    expect(await runDigests({ now, organisationIds: [orgId] })).toMatchObject({ sent: 1, alreadySent: 1 })
    expect(await deliverQueuedMail({ ignoreBackoff: true })).toEqual({ sent: 0, notSent: 0 })
    expect(to()).toEqual(['ben@bakery.example'])
    expect(await db.select().from(schema.mailOutbox)).toEqual([])
  })

  it('leaves out whoever turned the digest off', async () => {
    await db.update(schema.memberships).set({ digestEmails: false }).where(eq(schema.memberships.userId, people.ben))
    try {
      expect(await runDigests({ now, organisationIds: [orgId] })).toMatchObject({ sent: 1, turnedOff: 1 })
      expect(to()).toEqual(['anna@bakery.example'])
    }
    finally {
      await db.update(schema.memberships).set({ digestEmails: true })
    }
  })

  it('keeps going with the other organisations when one cannot be worked out', async () => {
    const real = trainingRows
    const failing: typeof trainingRows = async (id, filter, at) => {
      if (id === orgId) throw new Error('disk I/O error')
      return real(id, filter, at)
    }
    Object.assign(globalThis, { trainingRows: failing })
    try {
      expect(await runDigests({ now })).toMatchObject({ sent: 1, organisationErrors: 1 })
      expect(to()).toEqual(['wren@second.example'])
      // Nothing was claimed for the organisation that failed, so the next run sends its digests.
      Object.assign(globalThis, { trainingRows: real })
      expect(await runDigests({ now })).toMatchObject({ sent: 2, alreadySent: 1, organisationErrors: 0 })
    }
    finally {
      Object.assign(globalThis, { trainingRows: real })
    }
  })
})
