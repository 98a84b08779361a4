// Mass assignment (issue 7, item 3): every write route gets an otherwise valid body with fields a
// client must not set — organisation, role, user, timestamps, id, revision, password hash, author,
// status — carrying another organisation's ids and forged values. The schemas strip unknown keys
// (one is strict and refuses them with a message), and the routes build rows from the parsed input,
// so the stored rows must hold the server's values: the caller's organisation, fresh ids and times,
// the caller as author. The other organisation must not change at all.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { randomUUID } from 'node:crypto'
import { startServer, type TestServer } from '../support/server'
import { Client, uniqueAddress } from '../support/http'
import { PASSWORD, tokenFrom, uniqueEmail } from '../support/accounts'
import { organisationWorld, type OrgWorld } from '../support/org-world'
import { publishedJob } from '../support/breakdowns'
import { photoForm } from '../support/photos'
import { changedTables, SnapshotReader, type Snapshot } from '../support/db-snapshot'
import { routeFiles, routeKey } from '../support/route-matrix'

let server: TestServer
let reader: SnapshotReader
let own: OrgWorld
let victim: OrgWorld
let victimAtStart: Snapshot

beforeAll(async () => {
  server = await startServer()
  ;[own, victim] = await Promise.all([organisationWorld(server, 'Own'), organisationWorld(server, 'Victim')])
  reader = await SnapshotReader.open(server.databaseUrl)
  victimAtStart = await reader.organisation(victim.organisationId)
}, 180_000)
afterAll(async () => {
  reader?.close()
  await server?.stop()
})

const FORGED = {
  id: '0e1d2c3b-4a59-4687-9a6b-5c4d3e2f1a00',
  time: '2001-01-01T00:00:00.000Z',
  ms: Date.parse('2001-01-01T00:00:00.000Z'),
  hash: '$scrypt$n=2,r=1,p=1$intruder$intruder',
}

/** The fields a client has no business setting, pointing at the other organisation or at forged values. */
function privileged(overrides: Record<string, unknown> = {}): Record<string, unknown> {
  return {
    id: FORGED.id,
    organisationId: victim.organisationId,
    organisation_id: victim.organisationId,
    organisation: { id: victim.organisationId },
    role: 'admin',
    userId: victim.adminUserId,
    user_id: victim.adminUserId,
    createdBy: victim.adminUserId,
    invitedBy: victim.adminUserId,
    publishedBy: victim.adminUserId,
    coachUserId: victim.adminUserId,
    createdAt: FORGED.time,
    updatedAt: FORGED.time,
    publishedAt: FORGED.time,
    archivedAt: FORGED.time,
    retiredAt: FORGED.time,
    acceptedAt: FORGED.time,
    revokedAt: FORGED.time,
    receivedAt: 1,
    expiresAt: '2999-01-01T00:00:00.000Z',
    revision: 999,
    number: 99,
    status: 'published',
    passwordHash: FORGED.hash,
    password_hash: FORGED.hash,
    tokenHash: 'forged',
    jobId: victim.jobId,
    versionId: victim.publishedVersionId,
    learnerId: victim.learnerId,
    workAreaId: victim.workAreaId,
    basedOnVersionId: victim.publishedVersionId,
    ...overrides,
  }
}

async function one(table: string, where: string, args: Array<string | number>) {
  const rows = await reader.query(`select * from "${table}" where ${where}`, args)
  expect(rows, `${table} where ${where}`).toHaveLength(1)
  return rows[0]!
}

/** Every column of a stored row holds a server value: own organisation, no forged id, time, hash or reference into the other organisation. */
function expectServerValues(row: Record<string, unknown>, startedAt: number) {
  for (const [column, value] of Object.entries(row)) {
    const where = `${column} = ${JSON.stringify(value)}`
    if (column === 'organisation_id') expect(value, where).toBe(own.organisationId)
    expect(value, where).not.toBe(FORGED.id)
    expect(value, where).not.toBe(FORGED.hash)
    expect(value, where).not.toBe('forged')
    expect(victim.ids, where).not.toContain(value)
    if (column.endsWith('_at') && typeof value === 'number') {
      expect(value, where).not.toBe(FORGED.ms)
      if (column === 'created_at') expect(value, where).toBeGreaterThanOrEqual(startedAt - 1000)
    }
    if (column === 'revision') expect(value, where).not.toBe(999)
    if (column === 'number') expect(value, where).not.toBe(99)
  }
}

type Case = () => Promise<void>
const CASES: Record<string, Case> = {
  'POST /api/auth/signup': async () => {
    const started = Date.now()
    const email = uniqueEmail('signup')
    const client = new Client(server.url, uniqueAddress())
    const res = await client.post('/api/auth/signup', { ...privileged({ role: 'auditor' }), organisation: 'Fresh Bakery', name: 'New Admin', email, password: PASSWORD })
    expect(res.status, res.text).toBe(201)
    const user = await one('users', 'email = ?', [email])
    const membership = await one('memberships', 'user_id = ?', [String(user.id)])
    expect(membership.role).toBe('admin')
    expect(membership.organisation_id).toBe(res.body.organisation.id)
    expect(res.body.organisation.id).not.toBe(victim.organisationId)
    for (const row of [user, membership, await one('organisations', 'id = ?', [res.body.organisation.id])]) {
      expect(row.id).not.toBe(FORGED.id)
      expect(row.created_at).toBeGreaterThanOrEqual(started - 1000)
    }
    expect(user.password_hash).not.toBe(FORGED.hash)
  },
  'POST /api/auth/login': async () => {
    const client = new Client(server.url, uniqueAddress())
    const res = await client.post('/api/auth/login', { ...privileged(), email: own.adminEmail, password: PASSWORD })
    expect(res.status, res.text).toBe(200)
    const me = await client.get('/api/me')
    expect(me.body.organisation.id).toBe(own.organisationId)
    expect(me.body.user.id).toBe(own.adminUserId)
    expect(me.body.role).toBe('admin')
  },
  'POST /api/auth/logout': async () => {
    // A session of its own: signing out may end the session on the server, and the admin's must live on.
    const client = new Client(server.url, uniqueAddress())
    expect((await client.post('/api/auth/login', { email: own.adminEmail, password: PASSWORD })).status).toBe(200)
    const before = await reader.everything()
    expect((await client.post('/api/auth/logout', privileged())).status).toBe(204)
    // Nothing but the record that this one session ended, where the server keeps one.
    expect(changedTables(before, await reader.everything()).filter(t => t !== 'ended_sessions')).toEqual([])
    expect((await client.get('/api/me')).status).toBe(401)
    expect((await own.admin.get('/api/me')).status).toBe(200)
  },
  'POST /api/auth/forgot': async () => {
    const started = Date.now()
    const res = await new Client(server.url, uniqueAddress()).post('/api/auth/forgot', { ...privileged(), email: own.member.email })
    expect(res.status).toBe(202)
    const rows = await reader.query('select * from password_resets where created_at >= ?', [started - 1000])
    expect(rows.map(r => r.user_id)).toEqual([own.member.userId])
    expectServerValues(rows[0]!, started)
  },
  'POST /api/auth/reset': async () => {
    const email = own.member.email
    await new Client(server.url, uniqueAddress()).post('/api/auth/forgot', { email })
    const mail = await server.waitForMail(m => m.to.includes(email) && /new Fourfold password/.test(m.subject) && m.links.length > 0)
    const before = await one('users', 'id = ?', [own.member.userId])
    const res = await new Client(server.url, uniqueAddress()).post('/api/auth/reset', { ...privileged(), email: victim.adminEmail, token: tokenFrom(mail.links[0]!), password: 'a brand new passphrase' })
    expect(res.status, res.text).toBe(200)
    const after = await one('users', 'id = ?', [own.member.userId])
    expect(after.password_hash).not.toBe(before.password_hash)
    expect(after.password_hash).not.toBe(FORGED.hash)
    expect(after.email).toBe(email)
    // The member signs in with the new password; the member's client from before is signed out by it.
    const again = new Client(server.url, uniqueAddress())
    expect((await again.post('/api/auth/login', { email, password: 'a brand new passphrase' })).status).toBe(200)
    own.member.client = again
  },
  'POST /api/invites/accept': async () => {
    const started = Date.now()
    const email = uniqueEmail('invitee')
    expect((await own.admin.post('/api/invites', { email, role: 'learner' })).status).toBe(201)
    const mail = await server.waitForMail(m => m.to.includes(email))
    const client = new Client(server.url, uniqueAddress())
    const res = await client.post('/api/invites/accept', { ...privileged({ email: uniqueEmail('elsewhere') }), token: tokenFrom(mail.links[0]!), name: 'Invited Learner', password: PASSWORD })
    expect(res.status, res.text).toBe(200)
    const user = await one('users', 'id = ?', [res.body.user.id])
    expect(user.email).toBe(email)
    const membership = await one('memberships', 'user_id = ?', [String(user.id)])
    expect([membership.role, membership.organisation_id]).toEqual(['learner', own.organisationId])
    // A new roster entry in the caller's organisation, not the other organisation's learner.
    expectServerValues(await one('learners', 'user_id = ?', [String(user.id)]), started)
    expectServerValues(user, started)
    expectServerValues(membership, started)
  },
  'POST /api/auth/password': async () => {
    const before = await one('users', 'id = ?', [own.member.userId])
    const res = await own.member.client.post('/api/auth/password', { ...privileged(), currentPassword: 'a brand new passphrase', newPassword: 'yet another passphrase' })
    expect(res.status, res.text).toBe(200)
    const after = await one('users', 'id = ?', [own.member.userId])
    expect(after.password_hash).not.toBe(before.password_hash)
    expect(after.password_hash).not.toBe(FORGED.hash)
  },
  'PATCH /api/me/settings': async () => {
    // The one strict schema: unknown keys are refused, with a message that says what can be changed.
    const before = await reader.organisation(own.organisationId)
    const res = await own.admin.patch('/api/me/settings', { ...privileged(), digestEmails: false })
    expect(res.status).toBe(422)
    expect(res.body.data.message).toBe('Some fields need attention.')
    expect(res.body.data.fieldErrors._form).toEqual(['Only the daily digest setting can be changed here.'])
    expect(changedTables(before, await reader.organisation(own.organisationId))).toEqual([])
  },
  'PATCH /api/organisation': async () => {
    const before = await one('organisations', 'id = ?', [own.organisationId])
    const res = await own.admin.patch('/api/organisation', { ...privileged(), name: 'Own Bakery Renamed' })
    expect(res.status, res.text).toBe(200)
    const after = await one('organisations', 'id = ?', [own.organisationId])
    expect({ ...after, name: before.name }).toEqual(before)
    expect(after.name).toBe('Own Bakery Renamed')
  },
  'POST /api/work-areas': async () => {
    const started = Date.now()
    const res = await own.admin.post('/api/work-areas', { ...privileged(), name: 'Dispatch bay' })
    expect(res.status, res.text).toBe(201)
    expectServerValues(await one('work_areas', 'id = ?', [res.body.id]), started)
  },
  'PATCH /api/work-areas/[id]': async () => {
    const res = await own.admin.patch(`/api/work-areas/${own.workAreaId}`, { ...privileged(), name: 'Dispatch bay 2' })
    expect(res.status, res.text).toBe(200)
    expectServerValues(await one('work_areas', 'id = ?', [own.workAreaId]), 0)
  },
  'POST /api/invites': async () => {
    const started = Date.now()
    const res = await own.admin.post('/api/invites', { ...privileged({ learnerId: null }), email: uniqueEmail('coach'), role: 'coach' })
    expect(res.status, res.text).toBe(201)
    const invite = await one('invites', 'id = ?', [res.body.id])
    expectServerValues(invite, started)
    expect([invite.role, invite.invited_by, invite.accepted_at, invite.revoked_at]).toEqual(['coach', own.adminUserId, null, null])
    // Seven days from now, not the year 2999 the body asked for.
    expect(Number(invite.expires_at)).toBeLessThan(Date.now() + 8 * 86_400_000)
  },
  'PATCH /api/members/[id]': async () => {
    const res = await own.admin.patch(`/api/members/${own.member.membershipId}`, { ...privileged({ role: 'coach' }) })
    expect(res.status, res.text).toBe(200)
    const membership = await one('memberships', 'id = ?', [own.member.membershipId])
    expect([membership.role, membership.user_id, membership.organisation_id]).toEqual(['coach', own.member.userId, own.organisationId])
  },
  'POST /api/learners': async () => {
    const started = Date.now()
    const res = await own.admin.post('/api/learners', { ...privileged({ workAreaId: own.workAreaId }), name: 'Roster Person' })
    expect(res.status, res.text).toBe(201)
    const learner = await one('learners', 'id = ?', [res.body.id])
    expectServerValues(learner, started)
    // No account can be attached by naming it: only an accepted invitation links one.
    expect([learner.user_id, learner.archived_at]).toEqual([null, null])
  },
  'PATCH /api/learners/[id]': async () => {
    const res = await own.admin.patch(`/api/learners/${own.learnerId}`, { ...privileged({ workAreaId: own.workAreaId }), reference: 'B-7' })
    expect(res.status, res.text).toBe(200)
    const learner = await one('learners', 'id = ?', [own.learnerId])
    expectServerValues(learner, 0)
    expect([learner.reference, learner.user_id, learner.archived_at]).toEqual(['B-7', null, null])
  },
  'POST /api/jobs': async () => {
    const started = Date.now()
    const res = await own.admin.post('/api/jobs', { ...privileged({ workAreaId: own.workAreaId }), title: 'Load the proofer' })
    expect(res.status, res.text).toBe(201)
    const job = await one('jobs', 'id = ?', [res.body.id])
    expectServerValues(job, started)
    expect(job.archived_at).toBeNull()
  },
  'PATCH /api/jobs/[id]': async () => {
    const res = await own.admin.patch(`/api/jobs/${own.jobId}`, { ...privileged({ workAreaId: own.workAreaId }), purpose: 'Bread that rises evenly' })
    expect(res.status, res.text).toBe(200)
    const job = await one('jobs', 'id = ?', [own.jobId])
    expectServerValues(job, 0)
    expect(job.archived_at).toBeNull()
  },
  'POST /api/jobs/import': async () => {
    const started = Date.now()
    const doc = {
      ...privileged(),
      format: 'fourfold.breakdown',
      formatVersion: 1,
      exportedAt: FORGED.time,
      job: { ...privileged(), title: 'Imported mixer job', workAreaName: null },
      version: { ...privileged(), number: 7, status: 'published' },
      breakdown: { units: [{ id: randomUUID(), title: '', steps: [{ id: randomUUID(), text: 'Scrape the bowl', photoId: own.uploadId, keyPoints: [] }] }] },
    }
    const res = await own.admin.post('/api/jobs/import', doc)
    expect(res.status, res.text).toBe(201)
    expectServerValues(await one('jobs', 'id = ?', [res.body.jobId]), started)
    const version = await one('breakdown_versions', 'id = ?', [res.body.versionId])
    expectServerValues(version, started)
    expect([version.number, version.status, version.revision, version.created_by, version.published_at]).toEqual([1, 'draft', 0, own.adminUserId, null])
  },
  'POST /api/jobs/[id]/versions': async () => {
    const started = Date.now()
    const job = await publishedJob(own.admin, undefined, 'Second job for a draft')
    const res = await own.admin.post(`/api/jobs/${job.jobId}/versions`, { ...privileged(), content: { units: [] } })
    expect(res.status, res.text).toBe(201)
    const version = await one('breakdown_versions', 'id = ?', [res.body.id])
    expectServerValues(version, started)
    expect([version.number, version.status, version.revision, version.based_on_version_id, version.created_by]).toEqual([2, 'draft', 0, job.versionId, own.adminUserId])
  },
  'PATCH /api/versions/[id]': async () => {
    const before = await one('breakdown_versions', 'id = ?', [own.draftVersionId])
    const content = { units: [{ id: randomUUID(), title: '', steps: [{ id: randomUUID(), text: 'Check the seal', photoId: null, keyPoints: [] }] }] }
    const res = await own.admin.patch(`/api/versions/${own.draftVersionId}`, { ...privileged({ revision: before.revision }), content })
    expect(res.status, res.text).toBe(200)
    const after = await one('breakdown_versions', 'id = ?', [own.draftVersionId])
    expectServerValues(after, 0)
    expect([after.status, after.number, after.job_id, after.published_at, after.created_by]).toEqual(['draft', before.number, before.job_id, null, before.created_by])
    expect(after.revision).toBe(Number(before.revision) + 1)
  },
  'POST /api/versions/[id]/publish': async () => {
    const started = Date.now()
    const res = await own.admin.post(`/api/versions/${own.draftVersionId}/publish`, { ...privileged({ status: 'retired' }), changeNote: 'Seal check added.' })
    expect(res.status, res.text).toBe(200)
    const version = await one('breakdown_versions', 'id = ?', [own.draftVersionId])
    expectServerValues(version, 0)
    expect([version.status, version.published_by, version.change_note]).toEqual(['published', own.adminUserId, 'Seal check added.'])
    expect(Number(version.published_at)).toBeGreaterThanOrEqual(started - 1000)
  },
  'POST /api/versions/[id]/retire': async () => {
    const started = Date.now()
    const res = await own.admin.post(`/api/versions/${own.draftVersionId}/retire`, privileged({ status: 'draft' }))
    expect(res.status, res.text).toBe(200)
    const version = await one('breakdown_versions', 'id = ?', [own.draftVersionId])
    expectServerValues(version, 0)
    expect(version.status).toBe('retired')
    expect(Number(version.retired_at)).toBeGreaterThanOrEqual(started - 1000)
  },
  'PUT /api/plan/[learnerId]/[jobId]': async () => {
    const started = Date.now()
    const learner = (await own.admin.post('/api/learners', { name: 'Planned Person' })).body.id as string
    const res = await own.admin.request('PUT', `/api/plan/${learner}/${own.jobId}`, { ...privileged(), targetDate: '2030-05-01', reason: 'turnover', note: 'Cover for spring' })
    expect(res.status, res.text).toBe(200)
    const item = await one('plan_items', 'learner_id = ? and job_id = ?', [learner, own.jobId])
    expectServerValues(item, started)
    expect([item.created_by, item.target_date]).toEqual([own.adminUserId, '2030-05-01'])
  },
  'DELETE /api/plan/[learnerId]/[jobId]': async () => {
    const res = await own.admin.request('DELETE', `/api/plan/${own.learnerId}/${own.jobId}`, privileged())
    expect(res.status, res.text).toBe(200)
    expect(await reader.query('select * from plan_items where learner_id = ? and job_id = ?', [own.learnerId, own.jobId])).toEqual([])
  },
  'POST /api/sync': async () => {
    const started = Date.now()
    const deviceId = randomUUID()
    const lessonId = randomUUID()
    const version = await one('breakdown_versions', 'id = ?', [own.publishedVersionId])
    const stepId = (JSON.parse(String(version.content)) as { units: Array<{ steps: Array<{ id: string }> }> }).units[0]!.steps[0]!.id
    const lesson = { ...privileged(), id: lessonId, coachUserId: own.adminUserId, learnerId: own.learnerId, jobId: own.jobId, versionId: own.publishedVersionId, startedAt: started - 60_000, updatedAt: started, score: { recall: 1 } }
    const event = { ...privileged(), id: randomUUID(), lessonId, pass: 'T1-1', elementId: stepId, kind: 'mark', value: 'unaided', clientTime: started - 30_000, deviceId, seq: 1 }
    const res = await own.admin.post('/api/sync', { ...privileged(), deviceId, lessons: [lesson], events: [event], checks: [] })
    expect(res.status, res.text).toBe(200)
    expect(res.body.rejected).toEqual([])
    const stored = await one('lessons', 'id = ?', [lessonId])
    expectServerValues(stored, started)
    const storedEvent = await one('lesson_events', 'id = ?', [event.id])
    expectServerValues(storedEvent, started)
    expect(Number(storedEvent.received_at)).toBeGreaterThanOrEqual(started - 1000)
  },
  'POST /api/uploads': async () => {
    const started = Date.now()
    const form = photoForm()
    for (const [key, value] of Object.entries(privileged({ mime: 'text/html', width: 99999, storageKey: `${victim.organisationId}:x.jpg` }))) form.append(key, typeof value === 'string' ? value : JSON.stringify(value))
    const res = await own.admin.post('/api/uploads', form)
    expect(res.status, res.text).toBe(201)
    const upload = await one('uploads', 'id = ?', [res.body.id])
    expectServerValues(upload, started)
    expect([upload.mime, upload.width, upload.created_by]).toEqual(['image/jpeg', 8, own.adminUserId])
    expect(String(upload.storage_key).startsWith(`${own.organisationId}:`)).toBe(true)
  },
  'POST /api/reminders/run': async () => {
    const started = Date.now()
    const res = await own.admin.post('/api/reminders/run', privileged())
    expect(res.status, res.text).toBe(200)
    const audit = await one('audit_log', 'action = ? and created_at >= ?', ['digest.sent_now', started - 1000])
    expectServerValues(audit, started)
    expect(audit.actor_user_id).toBe(own.adminUserId)
  },
  'DELETE /api/invites/[id]': async () => {
    const res = await own.admin.request('DELETE', `/api/invites/${own.inviteId}`, privileged())
    expect(res.status, res.text).toBe(204)
    expect((await one('invites', 'id = ?', [own.inviteId])).revoked_at).not.toBe(FORGED.ms)
  },
  'DELETE /api/members/[id]': async () => {
    const res = await own.admin.request('DELETE', `/api/members/${own.member.membershipId}`, privileged())
    expect(res.status, res.text).toBe(204)
    expect(await reader.query('select id from memberships where id = ?', [own.member.membershipId])).toEqual([])
  },
  'DELETE /api/work-areas/[id]': async () => {
    const res = await own.admin.request('DELETE', `/api/work-areas/${own.workAreaId}`, privileged())
    expect(res.status, res.text).toBe(204)
    expect(await reader.query('select id from work_areas where id = ?', [own.workAreaId])).toEqual([])
  },
  'DELETE /api/jobs/[id]': async () => {
    const started = Date.now()
    const res = await own.admin.request('DELETE', `/api/jobs/${own.jobId}`, privileged())
    expect(res.status, res.text).toBe(204)
    expect(Number((await one('jobs', 'id = ?', [own.jobId])).archived_at)).toBeGreaterThanOrEqual(started - 1000)
  },
}

describe('mass assignment is ignored on every write route', () => {
  it('has a case for every POST, PUT, PATCH and DELETE route under server/api/', () => {
    const writes = routeFiles().map(routeKey).filter(k => !k.startsWith('GET ')).sort()
    expect(Object.keys(CASES).sort()).toEqual(writes)
  })

  it.each(Object.entries(CASES))('%s keeps the server\'s values', async (_key, run) => {
    await run()
    expect(changedTables(victimAtStart, await reader.organisation(victim.organisationId)), 'the other organisation changed').toEqual([])
  })

  it('wrote no row with the forged id anywhere', async () => {
    for (const table of reader.tableNames) {
      const columns = (await reader.query(`pragma table_info("${table}")`)).map(c => String(c.name))
      if (columns.includes('id')) expect(await reader.query(`select id from "${table}" where id = ?`, [FORGED.id]), table).toEqual([])
    }
  })
})
