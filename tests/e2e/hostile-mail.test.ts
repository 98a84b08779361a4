// E-mail header injection (issue 7, item 3). Addresses and names travel into mails: the invitee's or
// account's address is the recipient, the organisation's name stands in the subject, people's names,
// learner names and job titles in the text. Line breaks in them are refused at the schema (422 with a
// message saying so), so "Bcc:" or "To:" lines cannot be typed in; what the schemas take (encoded
// newlines, MIME encoded-words, trailing line breaks that are trimmed) is proven harmless, and so is
// data stored before the one-line rule (written here straight into the database): every captured
// mail's envelope (RCPT TO, kept by the local SMTP stand-in) names only the intended recipient, the
// raw header block holds only the headers nodemailer writes, and no mail reaches the intruder.
import { readFileSync } from 'node:fs'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type CapturedMail, type TestServer } from '../support/server'
import { Client, uniqueAddress } from '../support/http'
import { PASSWORD, signUp, tokenFrom, uniqueEmail } from '../support/accounts'
import { badRefusal } from '../support/refusals'
import { sql } from '../support/db'
import { publishedJob, rosterLearner } from '../support/breakdowns'

const INTRUDER = 'intruder@elsewhere.example'
/** What nodemailer writes in a header block (its own headers, RFC 5322 §3.6 names); anything else was injected. */
const HEADERS = new Set(['from', 'to', 'subject', 'message-id', 'date', 'mime-version', 'content-type', 'content-transfer-encoding'])

const BREAKS = ['\r\n', '\n', '\r', '\u0085', '\u2028', '\r\n\t']
/** Line breaks each followed by a header that would add a recipient or a body. */
const injected = (base: string) => BREAKS.flatMap(br => [`${base}${br}Bcc: ${INTRUDER}`, `${base}${br}To: ${INTRUDER}`, `${base}${br}${br}<script>alert(1)</script>`])

let server: TestServer
let admin: Awaited<ReturnType<typeof signUp>>

beforeAll(async () => {
  server = await startServer()
  admin = await signUp(server, 'Hollowmere Mail Bakery')
}, 120_000)
afterAll(() => server?.stop())

/** The raw header block of a captured mail, unfolded (RFC 5322 §2.2.3), as [name, value] pairs. */
function rawHeaders(mail: CapturedMail): Array<[string, string]> {
  const raw = readFileSync(join(server.dir, 'mail', `${mail.id}.eml`), 'latin1')
  const block = raw.slice(0, raw.indexOf('\r\n\r\n')).replace(/\r\n[ \t]+/g, ' ')
  return block.split('\r\n').map((line) => {
    const colon = line.indexOf(':')
    return [line.slice(0, colon).toLowerCase(), line.slice(colon + 1).trim()]
  })
}

/** One recipient in the envelope and in To, only nodemailer's own headers, each once. */
function expectOnlyTo(mail: CapturedMail, address: string) {
  expect(mail.envelope.to).toEqual([address])
  expect(mail.to).toEqual([address])
  const headers = rawHeaders(mail)
  expect(headers.filter(([name]) => !HEADERS.has(name)), 'injected headers').toEqual([])
  for (const name of ['from', 'to', 'subject']) expect(headers.filter(([n]) => n === name), name).toHaveLength(1)
  expect(headers.find(([n]) => n === 'to')![1]).toBe(address)
}

async function mailsTo(address: string) {
  return (await server.mails()).filter(m => m.envelope.to.includes(address) || m.to.includes(address))
}

async function expectNothingForTheIntruder() {
  // The stand-in may still be writing a mail queued a moment ago; give it the time a send takes.
  await new Promise(r => setTimeout(r, 300))
  expect(await mailsTo(INTRUDER)).toEqual([])
  for (const mail of await server.mails()) expect(mail.envelope.to.some(a => a.includes('intruder')), mail.subject).toBe(false)
}

async function expectSchemaRefusal(res: Awaited<ReturnType<Client['post']>>, field: string, words: RegExp) {
  expect(res.status, res.text).toBe(422)
  expect(badRefusal(res)).toBeNull()
  expect(res.body.data.fieldErrors[field]?.join(' ')).toMatch(words)
}

describe('refused at the schema: line breaks in addresses and names', () => {
  const ADDRESSES = [
    ...injected('ann@test.example'),
    'ann@test.example%0d%0aBcc:intruder@elsewhere.example',
    `ann@test.example, ${INTRUDER}`,
    `ann@test.example;${INTRUDER}`,
    `"ann\r\nBcc: ${INTRUDER}"@test.example`,
    `Ann <ann@test.example>, <${INTRUDER}>`,
    '=?utf-8?Q?ann=0D=0ABcc:intruder@elsewhere.example?=@test.example',
  ]

  it.each(ADDRESSES)('an address %j, in sign-up, invitations and password reset', async (email) => {
    const anonymous = new Client(server.url, uniqueAddress())
    await expectSchemaRefusal(await anonymous.post('/api/auth/signup', { organisation: 'Intruder Org', name: 'Ann', email, password: PASSWORD }), 'email', /e-mail address/)
    await expectSchemaRefusal(await admin.client.post('/api/invites', { email, role: 'coach' }), 'email', /e-mail address/)
    // A refusal, not the 202 "on its way" that would hide whether a mail went.
    await expectSchemaRefusal(await anonymous.post('/api/auth/forgot', { email }), 'email', /e-mail address/)
  })

  it('names: the person signing up, accepting an invitation, or on the roster; the organisation; a job title', async () => {
    const anonymous = new Client(server.url, uniqueAddress())
    for (const value of injected('Ann')) {
      await expectSchemaRefusal(await anonymous.post('/api/auth/signup', { organisation: 'Fine Org', name: value, email: uniqueEmail('n'), password: PASSWORD }), 'name', /name on one line/)
      await expectSchemaRefusal(await anonymous.post('/api/auth/signup', { organisation: value, name: 'Ann', email: uniqueEmail('n'), password: PASSWORD }), 'organisation', /organisation's name on one line/)
      await expectSchemaRefusal(await anonymous.post('/api/invites/accept', { token: 'x'.repeat(43), name: value, password: PASSWORD }), 'name', /name on one line/)
      await expectSchemaRefusal(await admin.client.patch('/api/organisation', { name: value }), 'name', /organisation's name on one line/)
      await expectSchemaRefusal(await admin.client.post('/api/learners', { name: value }), 'name', /name on one line/)
      await expectSchemaRefusal(await admin.client.post('/api/jobs', { title: value }), 'title', /title on one line/)
    }
  })

  it('stored nothing and sent nothing for any of them', async () => {
    const orgs = await sql(server.databaseUrl, 'select name from organisations')
    expect(orgs.rows.map(r => String(r.name))).toEqual(['Hollowmere Mail Bakery'])
    expect((await sql(server.databaseUrl, 'select count(*) as n from invites')).rows[0]!.n).toBe(0)
    expect((await sql(server.databaseUrl, 'select count(*) as n from learners')).rows[0]!.n).toBe(0)
    await expectNothingForTheIntruder()
    expect(await server.mails()).toEqual([])
  })
})

describe('proven harmless: what the schemas take, and names stored before the one-line rule', () => {
  it('an address with a trailing line break or spaces is trimmed and lower-cased: the mail goes to that address alone', async () => {
    const email = uniqueEmail('trim')
    expect((await admin.client.post('/api/invites', { email: ` ${email.toUpperCase()}\r\n`, role: 'coach' })).status).toBe(201)
    expectOnlyTo(await server.waitForMail(m => m.envelope.to.includes(email)), email)
    const res = await new Client(server.url, uniqueAddress()).post('/api/auth/forgot', { email: `${admin.email}\r\n` })
    expect(res.status).toBe(202)
    expectOnlyTo(await server.waitForMail(m => m.envelope.to.includes(admin.email) && /password/.test(m.subject)), admin.email)
  })

  it('encoded newlines and MIME encoded-words in names stay text in one header', async () => {
    const names = ['Ann%0d%0aBcc: intruder@elsewhere.example', 'Ann=0D=0ABcc: intruder@elsewhere.example', '=?UTF-8?Q?Ann=0D=0ABcc:_intruder@elsewhere.example?=', 'Ann\\r\\nBcc: intruder@elsewhere.example']
    for (const name of names) {
      expect((await admin.client.patch('/api/organisation', { name })).status).toBe(200)
      const email = uniqueEmail('enc')
      expect((await admin.client.post('/api/invites', { email, role: 'learner' })).status).toBe(201)
      const mail = await server.waitForMail(m => m.envelope.to.includes(email))
      expectOnlyTo(mail, email)
      // The name is in the subject as it was written (a decoded encoded-word shows its text, still in the one Subject header).
      expect(mail.subject.startsWith('Join ')).toBe(true)
    }
    await expectNothingForTheIntruder()
  })

  it('an organisation and an inviter named with line breaks before the rule: the invitation goes to the invitee alone', async () => {
    await sql(server.databaseUrl, 'update organisations set name = ? where id = ?', [`Legacy Bakery\r\nBcc: ${INTRUDER}\r\nX-Injected: yes`, admin.organisationId])
    await sql(server.databaseUrl, 'update users set name = ? where id = ?', [`Old Admin\r\nCc: ${INTRUDER}`, admin.userId])
    const email = uniqueEmail('legacy')
    expect((await admin.client.post('/api/invites', { email, role: 'coach' })).status).toBe(201)
    const mail = await server.waitForMail(m => m.envelope.to.includes(email))
    expectOnlyTo(mail, email)
    // nodemailer writes header values on one line: the break became a space, inside the subject.
    expect(mail.subject).toBe(`Join Legacy Bakery Bcc: ${INTRUDER} X-Injected: yes on Fourfold`)
    // In the text the name is what it was; it is body text, after the blank line that ends the headers.
    expect(mail.text).toContain('Old Admin')
    await expectNothingForTheIntruder()
  })

  it('a digest listing learner names and job titles with line breaks goes to each member alone', async () => {
    const learnerId = await rosterLearner(admin.client, 'Plain Learner')
    const job = await publishedJob(admin.client, undefined, 'Plain job')
    // Late: planned for a day long gone, so the digest lists it.
    expect((await admin.client.request('PUT', `/api/plan/${learnerId}/${job.jobId}`, { targetDate: '2000-01-03', reason: 'turnover', note: '' })).status).toBe(200)
    await sql(server.databaseUrl, 'update learners set name = ? where id = ?', [`Ann\r\nBcc: ${INTRUDER}\r\n\r\n<b>forged</b>`, learnerId])
    await sql(server.databaseUrl, 'update jobs set title = ? where id = ?', [`Slicer\nTo: ${INTRUDER}`, job.jobId])
    const before = (await server.mails()).length
    const res = await admin.client.post('/api/reminders/run')
    expect(res.status, res.text).toBe(200)
    const digest = await server.waitForMail(m => m.envelope.to.includes(admin.email) && /plan item late/.test(m.subject))
    expect((await server.mails()).length).toBe(before + 1)
    expectOnlyTo(digest, admin.email)
    expect(digest.text).toContain('Slicer')
    // The HTML body escapes the markup in the name.
    expect(digest.html).not.toContain('<b>forged</b>')
    await expectNothingForTheIntruder()
  })

  it('an invitation accepted with an injected name is refused, and a plain one signs in as the invitee', async () => {
    await sql(server.databaseUrl, 'update organisations set name = ? where id = ?', ['Hollowmere Mail Bakery', admin.organisationId])
    const email = uniqueEmail('accept')
    expect((await admin.client.post('/api/invites', { email, role: 'coach' })).status).toBe(201)
    const token = tokenFrom((await server.waitForMail(m => m.envelope.to.includes(email))).links[0]!)
    const client = new Client(server.url, uniqueAddress())
    await expectSchemaRefusal(await client.post('/api/invites/accept', { token, name: `Cora\r\nBcc: ${INTRUDER}`, password: PASSWORD }), 'name', /name on one line/)
    const accepted = await client.post('/api/invites/accept', { token, name: 'Cora Venn', password: PASSWORD })
    expect(accepted.status, accepted.text).toBe(200)
    expect(accepted.body.user.email).toBe(email)
  })
})
