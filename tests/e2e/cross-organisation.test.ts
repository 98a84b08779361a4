// No request ever reads or writes another organisation's data: B's ids with A's session answer 404,
// and B's rows are unchanged afterwards.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { addMember, signUp, uniqueEmail } from '../support/accounts'
import { photoForm } from '../support/photos'

let server: TestServer
let a: Awaited<ReturnType<typeof signUp>>
let b: Awaited<ReturnType<typeof signUp>>
const bIds: Record<string, string> = {}

beforeAll(async () => {
  server = await startServer()
  a = await signUp(server, 'Org A')
  b = await signUp(server, 'Org B')
  bIds.member = (await addMember(server, b.client, 'coach')).membershipId
  bIds.area = (await b.client.post('/api/work-areas', { name: 'B ovens' })).body.id
  bIds.invite = (await b.client.post('/api/invites', { email: uniqueEmail('b-invitee'), role: 'learner' })).body.id
  bIds.learner = (await b.client.post('/api/learners', { name: 'B Learner' })).body.id
  // B's job with a published version and a draft (saved once, so at revision 1).
  bIds.job = (await b.client.post('/api/jobs', { title: 'B proofing', workAreaId: bIds.area })).body.id
  bIds.published = (await b.client.post(`/api/jobs/${bIds.job}/versions`)).body.id
  await b.client.patch(`/api/versions/${bIds.published}`, { revision: 0, content: bContent('Load the proofer') })
  await b.client.post(`/api/versions/${bIds.published}/publish`, { changeNote: 'First.' })
  bIds.draft = (await b.client.post(`/api/jobs/${bIds.job}/versions`)).body.id
  await b.client.patch(`/api/versions/${bIds.draft}`, { revision: 0, content: bContent('Load the proofer rack') })
  bIds.photo = (await b.client.post('/api/uploads', photoForm())).body.id
}, 120_000)
afterAll(() => server?.stop())

const bUnitId = randomUUID()
const bStepId = randomUUID()
function bContent(text: string) {
  return { units: [{ id: bUnitId, title: '', steps: [{ id: bStepId, text, photoId: null, keyPoints: [] }] }] }
}

describe('cross-organisation', () => {
  const attempts: Array<[string, string, () => string, unknown?]> = [
    ['PATCH', 'member', () => `/api/members/${bIds.member}`, { role: 'admin' }],
    ['DELETE', 'member', () => `/api/members/${bIds.member}`],
    ['PATCH', 'work area', () => `/api/work-areas/${bIds.area}`, { name: 'Taken over' }],
    ['DELETE', 'work area', () => `/api/work-areas/${bIds.area}`],
    ['DELETE', 'invite', () => `/api/invites/${bIds.invite}`],
    ['GET', 'learner', () => `/api/learners/${bIds.learner}`],
    ['PATCH', 'learner', () => `/api/learners/${bIds.learner}`, { name: 'Taken over' }],
    ['GET', 'learner\'s scores', () => `/api/learners/${bIds.learner}/scores`],
    ['GET', 'job', () => `/api/jobs/${bIds.job}`],
    ['PATCH', 'job', () => `/api/jobs/${bIds.job}`, { title: 'Taken over' }],
    ['DELETE', 'job', () => `/api/jobs/${bIds.job}`],
    ['GET', 'job\'s versions', () => `/api/jobs/${bIds.job}/versions`],
    ['POST', 'job (new draft)', () => `/api/jobs/${bIds.job}/versions`],
    ['GET', 'draft version', () => `/api/versions/${bIds.draft}`],
    ['GET', 'published version', () => `/api/versions/${bIds.published}`],
    ['PATCH', 'draft version', () => `/api/versions/${bIds.draft}`, { revision: 1, content: bContent('Taken over') }],
    ['POST', 'draft version (publish)', () => `/api/versions/${bIds.draft}/publish`, { changeNote: 'Taken over' }],
    ['POST', 'published version (retire)', () => `/api/versions/${bIds.published}/retire`],
    ['GET', 'published version (export)', () => `/api/versions/${bIds.published}/export`],
    ['GET', 'photo', () => `/api/uploads/${bIds.photo}`],
    ['GET', 'photo thumbnail', () => `/api/uploads/${bIds.photo}?size=thumb`],
  ]

  it.each(attempts)('%s of B\'s %s with A\'s admin session answers 404', async (method, _what, path, body) => {
    const res = await a.client.request(method, path(), body ?? (method === 'GET' ? undefined : {}))
    expect(res.status).toBe(404)
    expect(res.body.message).toMatch(/not found in your organisation/)
  })

  it('leaves B\'s data as it was and never lists it to A', async () => {
    const members = (await b.client.get('/api/members')).body as Array<{ id: string, role: string }>
    expect(members.find(m => m.id === bIds.member)?.role).toBe('coach')
    expect((await b.client.get('/api/work-areas')).body).toEqual([{ id: bIds.area, name: 'B ovens' }])
    expect((await b.client.get('/api/invites')).body.map((i: { id: string }) => i.id)).toContain(bIds.invite)
    expect((await b.client.get(`/api/learners/${bIds.learner}`)).body.name).toBe('B Learner')
    expect((await a.client.get('/api/learners')).body).toEqual([])

    const aMembers = (await a.client.get('/api/members')).body as Array<{ id: string }>
    expect(aMembers.map(m => m.id)).not.toContain(bIds.member)
    expect((await a.client.get('/api/work-areas')).body).toEqual([])
    expect((await a.client.get('/api/invites')).body).toEqual([])
    const audit = (await a.client.get('/api/audit')).body as Array<{ targetId: string }>
    expect(audit.map(e => e.targetId)).not.toContain(bIds.area)

    const bJob = (await b.client.get(`/api/jobs/${bIds.job}`)).body
    expect(bJob).toMatchObject({ title: 'B proofing', archivedAt: null, workAreaId: bIds.area })
    expect(bJob.versions.map((v: { id: string, status: string }) => [v.id, v.status])).toEqual([[bIds.draft, 'draft'], [bIds.published, 'published']])
    expect((await b.client.get(`/api/versions/${bIds.draft}`)).body).toMatchObject({ revision: 1, content: bContent('Load the proofer rack') })
    expect((await a.client.get('/api/jobs?archived=1')).body).toEqual([])
  })

  it('lets A use the same work area name as B', async () => {
    expect((await a.client.post('/api/work-areas', { name: 'B ovens' })).status).toBe(201)
    expect((await a.client.post('/api/work-areas', { name: 'B ovens' })).status).toBe(409)
  })
})
