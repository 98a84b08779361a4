// The mail outbox (server/utils/mail-outbox.ts) against a real SQLite file with the committed
// migrations: a queued mail goes once and leaves the outbox; a mail server that is down keeps it
// queued and the retry timer sends it when the server is back; runs at the same moment never send
// a mail twice; what expires, what a dead run left and what is refused for good are handled as the
// module says. The mail server is a collector here (the e2e test tests/e2e/faults-mail.test.ts
// talks real SMTP); Nitro's auto-imported helpers are supplied as globals.
import { randomUUID } from 'node:crypto'
import { mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join, resolve } from 'node:path'
import { createClient, type Client } from '@libsql/client'
import { drizzle } from 'drizzle-orm/libsql'
import { migrate } from 'drizzle-orm/libsql/migrator'
import { afterAll, beforeAll, beforeEach, describe, expect, it } from 'vitest'
import * as schema from '../../server/db/schema'
import { serialiseWrite } from '../../server/utils/write-lock'
import type { OutgoingMail } from '../../server/utils/mail'
import { deliverQueuedMail, isPermanentRefusal, mailRetryDelay, queueMail, type QueuedMail } from '../../server/utils/mail-outbox'

let dir: string
let client: Client
let db: ReturnType<typeof drizzle<typeof schema>>
let sent: OutgoingMail[] = []
/** What the mail server does with the next mail: take it, or fail as given. */
let failure: Error | null = null

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'fourfold-outbox-'))
  const url = `file:${join(dir, 'outbox.db')}`
  client = createClient({ url, timeout: 5000 })
  db = drizzle(client, { schema })
  await migrate(db, { migrationsFolder: resolve('drizzle') })
  Object.assign(globalThis, {
    useDb: async () => db,
    serialiseWrite,
    // A mail server that takes its time, so runs at the same moment overlap.
    sendMail: async (mail: OutgoingMail) => {
      await new Promise(r => setTimeout(r, 3))
      if (failure) throw failure
      sent.push(mail)
    },
  })
})
afterAll(async () => {
  client?.close()
  if (dir) await rm(dir, { recursive: true, force: true })
})
beforeEach(async () => {
  sent = []
  failure = null
  await db.delete(schema.mailOutbox)
})

const HOUR = 3_600_000
const smtpDown = () => Object.assign(new Error('connect ECONNREFUSED 127.0.0.1:2525'), { code: 'ESOCKET' })
const mailboxGone = () => Object.assign(new Error('550 5.1.1 mailbox unavailable'), { code: 'EENVELOPE', responseCode: 550 })

function mail(to: string, kind: QueuedMail['kind'] = 'invite', expiresAt = Date.now() + HOUR): QueuedMail {
  return { to, subject: `A ${kind} for ${to}`, text: 'text', html: '<p>html</p>', kind, expiresAt }
}
const queue = (m: QueuedMail) => serialiseWrite(() => queueMail(db, m))
const waiting = () => db.select().from(schema.mailOutbox)

describe('the mail outbox', () => {
  it('sends a queued mail once and takes it out of the outbox', async () => {
    const id = await queue(mail('ines@bakery.example'))
    expect(await deliverQueuedMail({ ids: [id] })).toEqual({ sent: 1, notSent: 0 })
    expect(await deliverQueuedMail({ ignoreBackoff: true })).toEqual({ sent: 0, notSent: 0 })
    expect(sent.map(m => [m.to, m.subject])).toEqual([['ines@bakery.example', 'A invite for ines@bakery.example']])
    expect(await waiting()).toEqual([])
  })

  it('keeps a mail while the mail server is down and sends it by itself once it is back', async () => {
    failure = smtpDown()
    const id = await queue(mail('jory@bakery.example', 'reset'))
    expect(await deliverQueuedMail({ ids: [id] })).toEqual({ sent: 0, notSent: 1 })
    const [row] = await waiting()
    expect(row).toMatchObject({ attempts: 1, claimedBy: null, claimedUntil: null, lastError: expect.stringContaining('ECONNREFUSED') })
    expect(row!.nextAttemptAt).toBeGreaterThan(Date.now())
    // Not due yet: a run now leaves it alone.
    expect(await deliverQueuedMail()).toEqual({ sent: 0, notSent: 0 })
    failure = null
    // The timer armed by the failed try sends it (2 s after it).
    await expect.poll(() => sent.length, { timeout: 10_000, interval: 100 }).toBe(1)
    expect(sent[0]!.to).toBe('jory@bakery.example')
    expect(await waiting()).toEqual([])
  })

  it('sends each mail exactly once when five runs start at the same moment', async () => {
    const ids = await Promise.all(Array.from({ length: 20 }, (_, i) => queue(mail(`person${i}@bakery.example`))))
    const runs = await Promise.all([...Array.from({ length: 4 }, () => deliverQueuedMail()), deliverQueuedMail({ ids })])
    expect(runs.reduce((n, r) => n + r.sent, 0)).toBe(20)
    expect(sent.map(m => m.to).sort()).toEqual(Array.from({ length: 20 }, (_, i) => `person${i}@bakery.example`).sort())
    expect(await waiting()).toEqual([])
  })

  it('drops a mail not sent before it expired, and never sends it', async () => {
    await queue(mail('kit@bakery.example', 'reset', Date.now() - 1))
    expect(await deliverQueuedMail({ ignoreBackoff: true })).toEqual({ sent: 0, notSent: 0 })
    expect(sent).toEqual([])
    expect(await waiting()).toEqual([])
  })

  it('sends again an invite whose sender died mid-send, but not a digest (at most once a day)', async () => {
    const dead = { claimedBy: 'gone:1:x', claimedUntil: Date.now() - 1 }
    await db.insert(schema.mailOutbox).values({ id: randomUUID(), kind: 'invite', recipient: 'lea@bakery.example', subject: 's', text: 't', html: 'h', createdAt: Date.now(), expiresAt: Date.now() + HOUR, nextAttemptAt: Date.now(), ...dead })
    await db.insert(schema.mailOutbox).values({ id: randomUUID(), kind: 'digest', recipient: 'mo@bakery.example', subject: 's', text: 't', html: 'h', createdAt: Date.now(), expiresAt: Date.now() + HOUR, nextAttemptAt: Date.now(), ...dead })
    // A claim still running elsewhere is left to its holder.
    await db.insert(schema.mailOutbox).values({ id: randomUUID(), kind: 'invite', recipient: 'nia@bakery.example', subject: 's', text: 't', html: 'h', createdAt: Date.now(), expiresAt: Date.now() + HOUR, nextAttemptAt: Date.now(), claimedBy: 'busy:1:x', claimedUntil: Date.now() + HOUR })
    expect(await deliverQueuedMail({ ignoreBackoff: true })).toEqual({ sent: 1, notSent: 0 })
    expect(sent.map(m => m.to)).toEqual(['lea@bakery.example'])
    expect((await waiting()).map(r => r.recipient)).toEqual(['nia@bakery.example'])
  })

  it('gives a mail up after the mail server refused it for good three times', async () => {
    failure = mailboxGone()
    const id = await queue(mail('otto@bakery.example'))
    for (const attempts of [1, 2]) {
      expect(await deliverQueuedMail({ ids: [id], ignoreBackoff: true })).toEqual({ sent: 0, notSent: 1 })
      expect((await waiting())[0]!.attempts).toBe(attempts)
    }
    expect(await deliverQueuedMail({ ids: [id], ignoreBackoff: true })).toEqual({ sent: 0, notSent: 1 })
    expect(await waiting()).toEqual([])
    expect(sent).toEqual([])
  })

  it('backs off 2 s, 4 s, 8 s … up to 5 minutes, and tells a permanent refusal (5yz) from a passing one', () => {
    expect([1, 2, 3, 4].map(mailRetryDelay)).toEqual([2000, 4000, 8000, 16_000])
    expect(mailRetryDelay(20)).toBe(5 * 60_000)
    // RFC 5321 §4.2.1: 5yz permanent, 4yz transient; no reply at all (a dead server) is not permanent.
    expect(isPermanentRefusal(mailboxGone())).toBe(true)
    expect(isPermanentRefusal(Object.assign(new Error('451 try later'), { responseCode: 451 }))).toBe(false)
    expect(isPermanentRefusal(smtpDown())).toBe(false)
  })
})
