// The daily reminder digest over HTTP: two (and more) built servers on one SQLite file, as two
// app instances behind a load balancer would be, each sending through its own mail capture into
// one shared mail folder. One mail per person per day, whoever starts it and however often.
import { randomUUID } from 'node:crypto'
import { mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { freePort, startServer, type CapturedMail, type TestServer } from '../support/server'
import { Client, uniqueAddress } from '../support/http'
import { PASSWORD, addMember, signUp } from '../support/accounts'
import { cleanTryout, publishedJob, rosterLearner } from '../support/breakdowns'
import { sql } from '../support/db'
import { localDay } from '../../shared/utils/training-status'

const DAY = 86_400_000
const ORG = 'Crumbs & Co'
const OTHER_ORG = 'Second Bakehouse'

let dir: string
let a: TestServer
let b: TestServer
const extra: TestServer[] = []

let admin: Awaited<ReturnType<typeof signUp>>
let anna: Awaited<ReturnType<typeof addMember>>
let ben: Awaited<ReturnType<typeof addMember>>
let cara: Awaited<ReturnType<typeof addMember>>
let other: Awaited<ReturnType<typeof signUp>>
const learner: Record<string, string> = {}

async function signInOn(server: TestServer, email: string) {
  const client = new Client(server.url, uniqueAddress())
  const res = await client.post('/api/auth/login', { email, password: PASSWORD })
  if (res.status !== 200) throw new Error(`login on ${server.url}: ${res.status} ${res.text}`)
  return client
}

/** A lesson signed off as ready three days ago: its first spot check (one day later) is overdue now. */
async function readyLessonBy(coach: { client: Client, userId: string }, learnerId: string, job: Awaited<ReturnType<typeof publishedJob>>) {
  const deviceId = randomUUID()
  const lessonId = randomUUID()
  const signedOffAt = Date.now() - 3 * DAY
  const events = cleanTryout(lessonId, deviceId, job.content, 1, signedOffAt - 60_000)
  const lesson = { id: lessonId, coachUserId: coach.userId, learnerId, jobId: job.jobId, versionId: job.versionId, place: 'Slicer 2', startedAt: signedOffAt - 600_000, updatedAt: signedOffAt, decision: 'ready', signedOffAt }
  const res = await coach.client.post('/api/sync', { deviceId, lessons: [lesson], events, checks: [] })
  if (res.status !== 200 || res.body.rejected.length) throw new Error(`sync: ${res.status} ${res.text}`)
}

async function digestsTo(server: TestServer, organisation: string): Promise<CapturedMail[]> {
  return (await server.mails()).filter(m => m.subject.startsWith(`${organisation}:`))
}

function recipients(mails: CapturedMail[]): string[] {
  return mails.flatMap(m => m.to).sort()
}

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'fourfold-reminders-'))
  // One database file and one mail folder; two processes, started one after the other so the
  // second finds the migrations applied.
  a = await startServer({ dir })
  b = await startServer({ dir })

  admin = await signUp(a, ORG)
  anna = await addMember(a, admin.client, 'coach')
  ben = await addMember(a, admin.client, 'coach')
  cara = await addMember(a, admin.client, 'coach')
  const dov = await addMember(a, admin.client, 'coach')
  const job = await publishedJob(admin.client)
  for (const name of ['Ilse <Brannagh>', 'Tomas Quill', 'Runa Vell', 'Pia Marrow', 'Odo Fenn']) learner[name] = await rosterLearner(admin.client, name)

  await readyLessonBy(anna, learner['Ilse <Brannagh>']!, job)
  await readyLessonBy(ben, learner['Tomas Quill']!, job)
  await readyLessonBy(cara, learner['Runa Vell']!, job)
  // Dov taught Odo and then left: that check has nobody, so it goes to the admins.
  await readyLessonBy(dov, learner['Odo Fenn']!, job)
  expect((await admin.client.delete(`/api/members/${dov.membershipId}`)).status).toBe(204)
  // Pia was planned for the job by five days ago and has not been taught: late, for everyone.
  const planned = await admin.client.request('PUT', `/api/plan/${learner['Pia Marrow']}/${job.jobId}`, { targetDate: localDay(Date.now() - 5 * DAY), reason: 'turnover' })
  expect(planned.status, planned.text).toBe(200)

  // A second organisation with a late plan item of its own.
  other = await signUp(a, OTHER_ORG)
  const otherJob = await publishedJob(other.client, undefined, 'Check-weigh a tray')
  const otherLearner = await rosterLearner(other.client, 'Wen Harrow')
  expect((await other.client.request('PUT', `/api/plan/${otherLearner}/${otherJob.jobId}`, { targetDate: localDay(Date.now() - 2 * DAY), reason: 'new-job' })).status).toBe(200)
}, 180_000)

afterAll(async () => {
  for (const s of [...extra, b, a]) await s?.stop()
  if (dir) await rm(dir, { recursive: true, force: true })
})

describe('the digest setting', () => {
  it('is on by default, and each person turns only their own off', async () => {
    expect((await cara.client.get('/api/me')).body.settings).toEqual({ digestEmails: true })
    const off = await cara.client.patch('/api/me/settings', { digestEmails: false })
    expect(off.status).toBe(200)
    expect(off.body).toEqual({ digestEmails: false })
    expect((await cara.client.get('/api/me')).body.settings).toEqual({ digestEmails: false })
    expect((await anna.client.get('/api/me')).body.settings).toEqual({ digestEmails: true })
    const stored = await sql(a.databaseUrl, 'select count(*) n from memberships where digest_emails = 0')
    expect(Number(stored.rows[0]!.n)).toBe(1)
  })

  it('refuses anything but a yes or no for the caller themself', async () => {
    const wrongType = await anna.client.patch('/api/me/settings', { digestEmails: 'yes' })
    expect(wrongType.status).toBe(422)
    expect(wrongType.body.data.fieldErrors.digestEmails).toBeDefined()
    // No way to name someone else: an extra field is refused, and changes nobody.
    const someoneElse = await anna.client.patch('/api/me/settings', { digestEmails: false, userId: cara.userId })
    expect(someoneElse.status).toBe(422)
    expect((await anna.client.get('/api/me')).body.settings.digestEmails).toBe(true)
    expect((await anna.client.patch('/api/me/settings', 'not json')).status).toBe(400)
    expect((await new Client(a.url, uniqueAddress()).patch('/api/me/settings', { digestEmails: false })).status).toBe(401)
  })
})

describe('sending the digest', () => {
  it('keeps a digest the mail server did not take instead of losing it, sends it once, and mails only the organisation asked for', async () => {
    // A third instance whose mail server is down (nothing listens on that port).
    const broken = await startServer({ dir, env: { SMTP_URL: `smtp://127.0.0.1:${await freePort()}` } })
    extra.push(broken)
    const otherOnBroken = await signInOn(broken, other.email)
    const failed = await otherOnBroken.post('/api/reminders/run')
    expect(failed.status, failed.text).toBe(200)
    expect(failed.body).toMatchObject({ sent: 0, queued: 1 })
    // The claim stays and the mail waits in the outbox (server/utils/mail-outbox.ts).
    const claims = await sql(a.databaseUrl, 'select sent_at from digest_sends where organisation_id = ?', [other.organisationId])
    expect(claims.rows.map(r => Number(r.sent_at))).toEqual([0])
    await broken.stop()

    // Run again on an instance whose mail server answers: no second digest is composed, and the
    // queued one goes out through it.
    const retried = await other.client.post('/api/reminders/run')
    expect(retried.body).toMatchObject({ sent: 0, queued: 0, alreadySent: 1, fromOutbox: 1 })
    await a.waitForMail(m => m.subject.startsWith(`${OTHER_ORG}:`))
    const mails = await digestsTo(a, OTHER_ORG)
    expect(recipients(mails)).toEqual([other.email])
    expect(mails[0]!.text).toContain('Wen Harrow, Check-weigh a tray: planned by')
    // Nothing from the first organisation went out on the second one's run.
    expect(await digestsTo(a, ORG)).toEqual([])
    expect((await sql(a.databaseUrl, 'select sent_at from digest_sends where organisation_id = ?', [other.organisationId])).rows.map(r => Number(r.sent_at) > 0)).toEqual([true])
  })

  it('sends one mail per coach and admin when two instances start it at the same moment; none to whoever turned it off', async () => {
    const adminOnB = await signInOn(b, admin.email)
    const [first, second] = await Promise.all([admin.client.post('/api/reminders/run'), adminOnB.post('/api/reminders/run')])
    for (const res of [first, second]) expect([200, 409], res.text).toContain(res.status)
    const sent = [first, second].filter(r => r.status === 200).reduce((n, r) => n + r.body.sent, 0)
    expect(sent).toBe(3)

    const mails = await digestsTo(a, ORG)
    expect(recipients(mails)).toEqual([admin.email, anna.email, ben.email].sort())
    const to = (email: string) => mails.find(m => m.to.includes(email))!

    const annas = to(anna.email)
    expect(annas.subject).toBe(`${ORG}: 1 spot check due, 1 plan item late`)
    expect(annas.text).toContain('Spot checks due for learners you taught (1)')
    expect(annas.text).toMatch(/- Ilse <Brannagh>, Change the slicer blade set: overdue since \d+ \w{3}/)
    expect(annas.text).not.toContain('Tomas Quill')
    expect(annas.text).toContain('- Pia Marrow, Change the slicer blade set: planned by')
    expect(annas.text).toContain('not started')
    expect(annas.html).toContain('Ilse &lt;Brannagh&gt;')
    expect(annas.html).not.toContain('<Brannagh>')
    expect(annas.links.some(l => /\/plan$/.test(l))).toBe(true)
    expect(annas.links.some(l => /\/account$/.test(l))).toBe(true)

    const bens = to(ben.email)
    expect(bens.text).toContain('Tomas Quill')
    expect(bens.text).not.toContain('Ilse')
    expect(bens.text).not.toContain('Runa Vell')

    // The admin taught nobody: they get the check whose coach left, and the late plan item.
    const admins = to(admin.email)
    expect(admins.text).toContain('Spot checks with no coach (1)')
    expect(admins.text).toContain('Odo Fenn')
    expect(admins.text).not.toContain('Spot checks due for learners you taught')
    expect(admins.text).toContain('Pia Marrow')

    // Cara turned it off: no mail, and her learner is nobody else's mail either.
    expect(mails.some(m => m.text.includes('Runa Vell'))).toBe(false)
    const rows = await sql(a.databaseUrl, 'select user_id, day, sent_at from digest_sends where organisation_id = ?', [admin.organisationId])
    expect(rows.rows.map(r => r.user_id).sort()).toEqual([admin.userId, anna.userId, ben.userId].sort())
    expect(rows.rows.every(r => r.day === localDay(Date.now()) && Number(r.sent_at) > 0)).toBe(true)
    // The leases were given back.
    expect(Number((await sql(a.databaseUrl, 'select count(*) n from task_leases')).rows[0]!.n)).toBe(0)
  })

  it('sends nothing more the same day, from either instance', async () => {
    const adminOnB = await signInOn(b, admin.email)
    for (const client of [admin.client, adminOnB]) {
      const again = await client.post('/api/reminders/run')
      expect(again.status).toBe(200)
      expect(again.body).toMatchObject({ sent: 0, queued: 0, alreadySent: 3, turnedOff: 1 })
    }
    expect(await digestsTo(a, ORG)).toHaveLength(3)
  })

  it('is refused while another run for the organisation holds the lease', async () => {
    // Another instance holds the lease (its run is still going).
    await sql(a.databaseUrl, 'insert into task_leases (name, holder, expires_at) values (?, ?, ?)', [`reminders:digest:${admin.organisationId}`, 'elsewhere:1:x', Date.now() + 60_000])
    const busy = await admin.client.post('/api/reminders/run')
    expect(busy.status).toBe(409)
    expect(busy.body.message).toMatch(/being sent right now/)
    // A lease whose holder died expires, and the next run goes ahead.
    await sql(a.databaseUrl, 'update task_leases set expires_at = ? where name = ?', [Date.now() - 1, `reminders:digest:${admin.organisationId}`])
    expect((await admin.client.post('/api/reminders/run')).status).toBe(200)
  })

  it('is for admins only, and can be switched off for a whole deployment', async () => {
    expect((await anna.client.post('/api/reminders/run')).status).toBe(403)
    const off = await startServer({ dir, env: { DIGEST_ENABLED: 'false' } })
    extra.push(off)
    const res = await (await signInOn(off, admin.email)).post('/api/reminders/run')
    expect(res.status).toBe(409)
    expect(res.body.message).toMatch(/DIGEST_ENABLED/)
  })
})
