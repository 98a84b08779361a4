// The roster: learners with or without an account.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { Client, uniqueAddress } from '../support/http'
import { PASSWORD, addMember, signUp, tokenFrom, uniqueEmail } from '../support/accounts'

let server: TestServer
beforeAll(async () => {
  server = await startServer()
})
afterAll(() => server?.stop())

describe('roster', () => {
  it('adds, lists, edits and archives learners; coaches may, auditors only read', async () => {
    const admin = await signUp(server)
    const coach = await addMember(server, admin.client, 'coach')
    const auditor = await addMember(server, admin.client, 'auditor')
    const area = (await admin.client.post('/api/work-areas', { name: 'Bake line' })).body
    const created = await coach.client.post('/api/learners', { name: '  Ilse Brannagh  ', workAreaId: area.id, reference: 'HB-1' })
    expect(created.status).toBe(201)
    expect(created.body).toMatchObject({ name: 'Ilse Brannagh', workAreaId: area.id, reference: 'HB-1' })

    const list = await auditor.client.get('/api/learners')
    expect(list.status).toBe(200)
    expect(list.body).toEqual([expect.objectContaining({ id: created.body.id, name: 'Ilse Brannagh', workAreaName: 'Bake line', hasAccount: false })])
    expect((await auditor.client.post('/api/learners', { name: 'X' })).status).toBe(403)

    const renamed = await coach.client.patch(`/api/learners/${created.body.id}`, { name: 'Ilse Brannagh-Okafor' })
    expect(renamed.body.name).toBe('Ilse Brannagh-Okafor')
    expect((await coach.client.patch(`/api/learners/${created.body.id}`, { archived: true })).status).toBe(200)
    expect((await coach.client.get('/api/learners')).body).toEqual([])
    expect((await coach.client.get('/api/learners?archived=1')).body).toHaveLength(1)
  })

  it('refuses a work area of another organisation, naming the field', async () => {
    const a = await signUp(server)
    const b = await signUp(server)
    const bArea = (await b.client.post('/api/work-areas', { name: 'B area' })).body
    const res = await a.client.post('/api/learners', { name: 'Someone', workAreaId: bArea.id })
    expect(res.status).toBe(422)
    expect(res.body.data.fieldErrors.workAreaId).toEqual(['Choose a work area from the list; that one is not in your organisation.'])
  })

  it('links an invited learner\'s new account to their roster entry; they may read only their own', async () => {
    const admin = await signUp(server)
    const entry = (await admin.client.post('/api/learners', { name: 'Matthias Quennell' })).body
    const other = (await admin.client.post('/api/learners', { name: 'Nadia Strathorne' })).body
    const email = uniqueEmail('roster')
    expect((await admin.client.post('/api/invites', { email, role: 'coach', learnerId: entry.id })).status).toBe(422)
    expect((await admin.client.post('/api/invites', { email, role: 'learner', learnerId: entry.id })).status).toBe(201)
    const mail = await server.waitForMail(m => m.to.includes(email))
    const learner = new Client(server.url, uniqueAddress())
    expect((await learner.post('/api/invites/accept', { token: tokenFrom(mail.links[0]!), name: 'Matthias Q.', password: PASSWORD })).status).toBe(200)
    const list = (await admin.client.get('/api/learners')).body as Array<{ id: string, hasAccount: boolean }>
    expect(list.find(l => l.id === entry.id)!.hasAccount).toBe(true)
    expect(list).toHaveLength(2)
    expect((await learner.get(`/api/learners/${entry.id}`)).status).toBe(200)
    expect((await learner.get(`/api/learners/${other.id}`)).status).toBe(403)
    expect((await learner.get('/api/learners')).status).toBe(403)
  })

  it('puts a learner invited without a roster entry into the roster', async () => {
    const admin = await signUp(server)
    const learner = await addMember(server, admin.client, 'learner')
    const list = (await admin.client.get('/api/learners')).body as Array<{ name: string, hasAccount: boolean }>
    expect(list).toEqual([expect.objectContaining({ name: 'Test learner', hasAccount: true })])
    expect(learner.userId).toBeTruthy()
  })
})
