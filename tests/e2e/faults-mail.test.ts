// The SMTP server down. Two app instances on one database, both with SMTP_URL at a port where
// nothing listens: an invitation, a password reset and the daily digest all still succeed for the
// person (201, 202, 200), their mails wait in the outbox; then an SMTP server starts on that port
// and each mail arrives exactly once (both instances retry; the claim hands each mail to one), its
// link still works, and the digest's once-a-day rule holds.
import { mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { SMTPServer } from 'smtp-server'
import { simpleParser } from 'mailparser'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { freePort, startServer, type TestServer } from '../support/server'
import { Client, uniqueAddress } from '../support/http'
import { PASSWORD, signUp, tokenFrom, uniqueEmail } from '../support/accounts'
import { publishedJob, rosterLearner } from '../support/breakdowns'
import { sql } from '../support/db'
import { linksIn } from '../../server/utils/mail-links'
import { localDay } from '../../shared/utils/training-status'

const DAY = 86_400_000
let dir: string
let smtpPort: number
let a: TestServer
let b: TestServer
let smtp: SMTPServer | undefined
const arrived: Array<{ to: string[], subject: string, text: string }> = []

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'fourfold-mail-down-'))
  smtpPort = await freePort()
  const env = { SMTP_URL: `smtp://127.0.0.1:${smtpPort}` }
  a = await startServer({ dir, env })
  b = await startServer({ dir, env })
})
afterAll(async () => {
  await new Promise(r => (smtp ? smtp.close(() => r(null)) : r(null)))
  for (const s of [b, a]) await s?.stop()
  if (dir) await rm(dir, { recursive: true, force: true })
})

/** The mail server coming back: an SMTP server on the port SMTP_URL names, keeping what it receives. */
async function startSmtp() {
  smtp = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    onData(stream, _session, callback) {
      simpleParser(stream).then((parsed) => {
        const to = [parsed.to].flat().flatMap(t => t?.value ?? []).map(v => v.address ?? '')
        arrived.push({ to, subject: parsed.subject ?? '', text: parsed.text ?? '' })
        callback()
      }, callback)
    },
  })
  await new Promise<void>((resolve, reject) => {
    smtp!.once('error', reject)
    smtp!.listen(smtpPort, '127.0.0.1', () => resolve())
  })
}

const outbox = async () => (await sql(a.databaseUrl, 'select kind, recipient, attempts from mail_outbox order by kind')).rows.map(r => ({ kind: r.kind, recipient: r.recipient, attempts: Number(r.attempts) }))

describe('the SMTP server down', () => {
  let admin: Awaited<ReturnType<typeof signUp>>
  let adminOnB: Client
  const invitee = uniqueEmail('invitee')

  it('lets the invitation, the password reset and the digest succeed, with their mails queued', async () => {
    admin = await signUp(a, 'Crumbs & Co')
    // Something for the digest to say: a plan item five days late.
    const job = await publishedJob(admin.client)
    const learnerId = await rosterLearner(admin.client, 'Pia Marrow')
    expect((await admin.client.request('PUT', `/api/plan/${learnerId}/${job.jobId}`, { targetDate: localDay(Date.now() - 5 * DAY), reason: 'turnover' })).status).toBe(200)

    const invite = await admin.client.post('/api/invites', { email: invitee, role: 'coach' })
    expect(invite.status, invite.text).toBe(201)
    expect(invite.body.mailed).toBe(false)

    const forgot = await new Client(b.url, uniqueAddress()).post('/api/auth/forgot', { email: admin.email })
    expect(forgot.status).toBe(202)

    adminOnB = new Client(b.url, uniqueAddress())
    expect((await adminOnB.post('/api/auth/login', { email: admin.email, password: PASSWORD })).status).toBe(200)
    const digest = await adminOnB.post('/api/reminders/run')
    expect(digest.status, digest.text).toBe(200)
    expect(digest.body).toMatchObject({ sent: 0, queued: 1, fromOutbox: 0 })

    expect(await outbox()).toEqual([
      { kind: 'digest', recipient: admin.email, attempts: expect.any(Number) },
      { kind: 'invite', recipient: invitee, attempts: expect.any(Number) },
      { kind: 'reset', recipient: admin.email, attempts: expect.any(Number) },
    ])
    const claim = await sql(a.databaseUrl, 'select sent_at from digest_sends where user_id = ?', [admin.userId])
    expect(claim.rows.map(r => Number(r.sent_at))).toEqual([0])
    expect(arrived).toEqual([])
  })

  it('sends each queued mail exactly once when the SMTP server is back, with links that work', async () => {
    await startSmtp()
    await expect.poll(() => arrived.length, { timeout: 45_000, interval: 250 }).toBe(3)
    // The message is in our hands before the sender hears the server's 250 and deletes its row:
    // the outbox empties a moment after the last arrival, not at the same instant.
    await expect.poll(outbox, { timeout: 10_000, interval: 100 }).toEqual([])
    // Both instances keep retrying on their own timers: give them the time of a few more tries.
    await new Promise(r => setTimeout(r, 8000))
    const got = arrived.map(m => [m.to.join(','), m.subject]).sort()
    expect(got).toHaveLength(3)
    expect(got.filter(([to]) => to === invitee)).toHaveLength(1)
    expect(got.filter(([to]) => to === admin.email)).toHaveLength(2)

    const digest = arrived.find(m => m.subject.startsWith('Crumbs & Co:'))!
    expect(digest.text).toContain('Pia Marrow, Change the slicer blade set: planned by')
    const sentAt = await sql(a.databaseUrl, 'select sent_at from digest_sends where user_id = ?', [admin.userId])
    expect(Number(sentAt.rows[0]!.sent_at)).toBeGreaterThan(0)

    // The links in the queued mails still work.
    const inviteLink = linksIn(arrived.find(m => m.to.includes(invitee))!.text).find(l => l.includes('/accept-invite?token='))!
    const accepted = await new Client(a.url, uniqueAddress()).post('/api/invites/accept', { token: tokenFrom(inviteLink), name: 'Wil Oakes', password: PASSWORD })
    expect(accepted.status, accepted.text).toBe(200)
    const resetLink = linksIn(arrived.find(m => m.to.includes(admin.email) && m !== digest)!.text).find(l => l.includes('/reset-password?token='))!
    const reset = await new Client(b.url, uniqueAddress()).post('/api/auth/reset', { token: tokenFrom(resetLink), password: 'a new passphrase here' })
    expect(reset.status, reset.text).toBe(200)
  })

  it('sends no second digest the same day', async () => {
    const signedIn = new Client(a.url, uniqueAddress())
    expect((await signedIn.post('/api/auth/login', { email: admin.email, password: 'a new passphrase here' })).status).toBe(200)
    const again = await signedIn.post('/api/reminders/run')
    expect(again.status, again.text).toBe(200)
    // The admin had theirs; the coach who joined through the queued invitation gets their first.
    expect(again.body).toMatchObject({ sent: 1, queued: 0, alreadySent: 1, fromOutbox: 0 })
    await new Promise(r => setTimeout(r, 1000))
    const digests = arrived.filter(m => m.subject.startsWith('Crumbs & Co:'))
    expect(digests.map(m => m.to.join(',')).sort()).toEqual([admin.email, invitee].sort())
  })
})
