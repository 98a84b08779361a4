// An organisation with one row of every kind, made through the real API: the fuzz sends its ids
// to its own routes (where they are real) and to other organisations' sessions (where they must
// be as unknown as a random id).
import type { Client } from './http'
import type { TestServer } from './server'
import { addMember, signUp, uniqueEmail } from './accounts'
import { publishedJob, rosterLearner } from './breakdowns'
import { teach } from './people'
import { photoForm } from './photos'

export interface OrgWorld {
  organisationId: string
  admin: Client
  adminUserId: string
  adminEmail: string
  adminMembershipId: string
  /** An auditor the fuzz may change or remove. */
  member: { client: Client, membershipId: string, userId: string, email: string }
  inviteId: string
  workAreaId: string
  learnerId: string
  jobId: string
  publishedVersionId: string
  draftVersionId: string
  uploadId: string
  lessonId: string
  /** Every id above. */
  ids: string[]
}

function ok<T>(res: { status: number, text: string, body: T }, what: string, status = 201): T {
  if (res.status !== status) throw new Error(`${what}: ${res.status} ${res.text}`)
  return res.body
}

export async function organisationWorld(server: TestServer, label: string): Promise<OrgWorld> {
  const { client: admin, organisationId, userId: adminUserId, email: adminEmail } = await signUp(server, `${label} ${uniqueEmail('org')}`)
  const member = await addMember(server, admin, 'auditor')
  const members = ok(await admin.get<Array<{ id: string, userId: string }>>('/api/members'), 'members', 200)
  const adminMembershipId = members.find(m => m.userId === adminUserId)!.id
  const inviteId = ok(await admin.post('/api/invites', { email: uniqueEmail('open'), role: 'coach' }), 'invite').id as string
  const workAreaId = ok(await admin.post('/api/work-areas', { name: `${label} floor` }), 'work area').id as string
  const learnerId = await rosterLearner(admin, `${label} Learner`)
  ok(await admin.patch(`/api/learners/${learnerId}`, { workAreaId }), 'learner work area', 200)
  const taught = await publishedJob(admin, undefined, `${label} job`)
  ok(await admin.patch(`/api/jobs/${taught.jobId}`, { workAreaId }), 'job work area', 200)
  const draftVersionId = ok(await admin.post(`/api/jobs/${taught.jobId}/versions`), 'draft').id as string
  const uploadId = ok(await admin.post('/api/uploads', photoForm()), 'upload').id as string
  ok(await admin.request('PUT', `/api/plan/${learnerId}/${taught.jobId}`, { targetDate: '2030-01-31', reason: 'turnover', note: '' }), 'plan', 200)
  const { lessonId } = await teach({ client: admin, userId: adminUserId }, { learnerId, ...taught }, { daysAgo: 1, decision: 'another-pass' })
  const world = {
    organisationId, admin, adminUserId, adminEmail, adminMembershipId,
    member: { client: member.client, membershipId: member.membershipId, userId: member.userId, email: member.email },
    inviteId, workAreaId, learnerId, jobId: taught.jobId, publishedVersionId: taught.versionId, draftVersionId, uploadId, lessonId,
  }
  return { ...world, ids: [organisationId, adminUserId, adminMembershipId, member.membershipId, member.userId, inviteId, workAreaId, learnerId, taught.jobId, taught.versionId, draftVersionId, uploadId, lessonId] }
}
