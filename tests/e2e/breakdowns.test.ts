// Jobs and breakdown versions over HTTP: draft → save → publish → immutable → new draft with the
// same lineage → publish v2 retires v1; the autosave counter; the publish rules; export and import
// between organisations; what learners see; archiving.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { addMember, signUp } from '../support/accounts'
import type { Client } from '../support/http'
import { photoForm } from '../support/photos'
import { diffBreakdowns, summariseDiff } from '../../shared/utils/breakdown-diff'
import type { BreakdownContent } from '../../shared/schemas/breakdown'

let server: TestServer
let a: Awaited<ReturnType<typeof signUp>>
let b: Awaited<ReturnType<typeof signUp>>
let coach: Client
let learner: Client
let auditor: Client
let bakehouseA: string

beforeAll(async () => {
  server = await startServer()
  a = await signUp(server, 'Hollowmere Bakery')
  b = await signUp(server, 'Brindle Packaging')
  coach = (await addMember(server, a.client, 'coach')).client
  learner = (await addMember(server, a.client, 'learner')).client
  auditor = (await addMember(server, a.client, 'auditor')).client
  bakehouseA = (await a.client.post('/api/work-areas', { name: 'Bakehouse' })).body.id
  await b.client.post('/api/work-areas', { name: 'Bakehouse' })
}, 120_000)
afterAll(() => server?.stop())

function content(stepTexts: string[] = ['Weigh the flour', 'Mix the dough']): BreakdownContent {
  return {
    units: [{
      id: randomUUID(),
      title: '',
      steps: stepTexts.map((text, i) => ({
        id: randomUUID(),
        text,
        photoId: null,
        keyPoints: i === 0
          ? [
              { id: randomUUID(), kind: 'quality', text: 'Tare the bowl first', reason: 'Otherwise the dough is dry', photoId: null },
              { id: randomUUID(), kind: 'safety', text: 'Lift the sack with bent knees', reason: 'A sack weighs 25 kg', photoId: null },
            ]
          : [{ id: randomUUID(), kind: 'knack', text: 'Listen for the slap', reason: '', photoId: null }],
      })),
    }],
  }
}

async function newJob(client: Client, title = `Mix bread dough ${randomUUID().slice(0, 6)}`) {
  const res = await client.post('/api/jobs', {
    title,
    workAreaId: bakehouseA,
    purpose: 'Dough that rises evenly.',
    hazards: [{ category: 'moving-parts', description: 'Spiral mixer hook' }, { category: 'lifting', description: '' }],
    ppe: ['Hair net', 'Apron'],
    toolsAndMaterials: ['Scale', 'Spiral mixer'],
    workplaceArrangement: 'Flour sacks to the left of the scale.',
    coverageTarget: 3,
  })
  expect(res.status, res.text).toBe(201)
  return res.body as { id: string, title: string }
}

async function startDraft(client: Client, jobId: string) {
  const res = await client.post(`/api/jobs/${jobId}/versions`)
  expect(res.status, res.text).toBe(201)
  return res.body as { id: string, number: number, status: string, revision: number, content: BreakdownContent }
}

async function save(client: Client, versionId: string, revision: number, body: BreakdownContent) {
  return client.patch(`/api/versions/${versionId}`, { revision, content: body })
}

/** A job with a published v1 of the given content; returns ids and the content. */
async function publishedJob(body = content()) {
  const job = await newJob(coach)
  const draft = await startDraft(coach, job.id)
  expect((await save(coach, draft.id, draft.revision, body)).status).toBe(200)
  const published = await a.client.post(`/api/versions/${draft.id}/publish`, { changeNote: 'First version.' })
  expect(published.status, published.text).toBe(200)
  return { job, versionId: draft.id, content: body }
}

describe('jobs', () => {
  it('creates a job in a work area of the organisation, and refuses another organisation\'s work area on the field', async () => {
    const job = await newJob(coach, 'Score the loaves')
    const got = await auditor.get(`/api/jobs/${job.id}`)
    expect(got.status).toBe(200)
    expect(got.body).toMatchObject({ id: job.id, title: 'Score the loaves', workAreaId: bakehouseA, workAreaName: 'Bakehouse', coverageTarget: 3, ppe: ['Hair net', 'Apron'], versions: [] })
    expect(got.body.organisationId).toBeUndefined()

    const bArea = (await b.client.get('/api/work-areas')).body[0].id
    const refused = await coach.post('/api/jobs', { title: 'Borrowed area', workAreaId: bArea })
    expect(refused.status).toBe(422)
    expect(refused.body.data.fieldErrors.workAreaId[0]).toMatch(/not in your organisation/)
    const patched = await coach.patch(`/api/jobs/${job.id}`, { workAreaId: bArea })
    expect(patched.status).toBe(422)
    expect((await coach.get(`/api/jobs/${job.id}`)).body.workAreaId).toBe(bakehouseA)
  })

  it('changes a job\'s fields and records it in the audit log', async () => {
    const job = await newJob(coach)
    const res = await coach.patch(`/api/jobs/${job.id}`, { title: 'Mix rye dough', workAreaId: null, coverageTarget: 4 })
    expect(res.status, res.text).toBe(200)
    expect(res.body).toMatchObject({ id: job.id, title: 'Mix rye dough', workAreaId: null, coverageTarget: 4, purpose: 'Dough that rises evenly.' })
    expect((await coach.patch(`/api/jobs/${job.id}`, {})).status).toBe(422)
    const audit = (await a.client.get('/api/audit')).body as Array<{ action: string, targetId: string }>
    expect(audit.filter(e => e.targetId === job.id).map(e => e.action).sort()).toEqual(['job.created', 'job.updated'])
  })

  it('archive hides a job from the list; ?archived=1 shows it; it takes no new draft', async () => {
    const job = await newJob(coach)
    expect((await coach.get('/api/jobs')).body.map((j: { id: string }) => j.id)).toContain(job.id)
    const res = await coach.delete(`/api/jobs/${job.id}`)
    expect(res.status).toBe(204)
    expect((await coach.get('/api/jobs')).body.map((j: { id: string }) => j.id)).not.toContain(job.id)
    expect((await learner.get('/api/jobs')).body.map((j: { id: string }) => j.id)).not.toContain(job.id)
    const all = (await coach.get('/api/jobs?archived=1')).body as Array<{ id: string, archivedAt: string | null }>
    expect(all.find(j => j.id === job.id)?.archivedAt).toEqual(expect.any(String))
    expect((await coach.get(`/api/jobs/${job.id}`)).status).toBe(200)
    expect((await coach.post(`/api/jobs/${job.id}/versions`)).status).toBe(409)
    expect((await coach.delete(`/api/jobs/${job.id}`)).status).toBe(204)
    expect((await coach.get('/api/jobs?archived=yes')).status).toBe(422)
  })
})

describe('versions', () => {
  it('draft → save → publish → immutable → new draft with the same lineage → publish v2 retires v1', async () => {
    const job = await newJob(coach)
    const draft = await startDraft(coach, job.id)
    expect(draft).toMatchObject({ number: 1, status: 'draft', revision: 0 })
    expect(draft.content.units).toHaveLength(1)
    expect(draft.content.units[0]).toMatchObject({ title: '', steps: [] })

    const again = await coach.post(`/api/jobs/${job.id}/versions`)
    expect(again.status).toBe(409)
    expect(again.body.data.draftId).toBe(draft.id)

    const v1Content = content()
    const saved = await save(coach, draft.id, 0, v1Content)
    expect(saved.status, saved.text).toBe(200)
    expect(saved.body.revision).toBe(1)
    expect((await coach.get(`/api/versions/${draft.id}`)).body).toMatchObject({ revision: 1, content: v1Content, status: 'draft' })

    const listed = (await coach.get('/api/jobs')).body.find((j: { id: string }) => j.id === job.id)
    expect(listed).toMatchObject({ workAreaName: 'Bakehouse', published: null, draft: { id: draft.id, number: 1, revision: 1 } })

    const published = await a.client.post(`/api/versions/${draft.id}/publish`, { changeNote: 'First version.' })
    expect(published.status, published.text).toBe(200)
    expect(published.body).toMatchObject({ id: draft.id, status: 'published', changeNote: 'First version.', publishedByName: 'Test Admin', content: v1Content })
    expect(published.body.publishedAt).toEqual(expect.any(String))

    // Any write to the published version answers 409, and changes nothing.
    const write = await save(coach, draft.id, 1, content(['Something else']))
    expect(write.status).toBe(409)
    expect(write.body.message).toBe('A published version cannot be changed; start a new draft.')
    expect((await a.client.post(`/api/versions/${draft.id}/publish`, { changeNote: 'Again.' })).status).toBe(409)
    expect((await coach.get(`/api/versions/${draft.id}`)).body).toMatchObject({ revision: 1, content: v1Content, changeNote: 'First version.' })

    // The new draft starts from the published content with the same lineage ids.
    const v2 = await startDraft(coach, job.id)
    expect(v2).toMatchObject({ number: 2, status: 'draft', revision: 0, content: v1Content })
    expect((await coach.get(`/api/versions/${v2.id}`)).body.basedOnVersionId).toBe(draft.id)

    const v2Content = structuredClone(v1Content)
    const steps = v2Content.units[0]!.steps
    steps[0]!.text = 'Weigh the flour and water'
    steps.reverse()
    steps.push({ id: randomUUID(), text: 'Rest the dough', photoId: null, keyPoints: [] })
    expect((await save(coach, v2.id, 0, v2Content)).status).toBe(200)
    const v2Published = await a.client.post(`/api/versions/${v2.id}/publish`, { changeNote: 'Rest step added.' })
    expect(v2Published.status, v2Published.text).toBe(200)

    const v1After = (await coach.get(`/api/versions/${draft.id}`)).body
    expect(v1After).toMatchObject({ status: 'retired', content: v1Content })
    expect(v1After.retiredAt).toEqual(expect.any(String))
    expect((await save(coach, draft.id, 1, v2Content)).body.message).toBe('A retired version cannot be changed; start a new draft.')

    const versions = (await auditor.get(`/api/jobs/${job.id}/versions`)).body as Array<{ id: string, number: number, status: string }>
    expect(versions.map(v => [v.number, v.status])).toEqual([[2, 'published'], [1, 'retired']])
    expect((await coach.get('/api/jobs')).body.find((j: { id: string }) => j.id === job.id)).toMatchObject({ published: { id: v2.id, number: 2 }, draft: null })

    // Same lineage ids, so the diff sees a reworded step, moves and one added step — not a new breakdown.
    const older = (await coach.get(`/api/versions/${draft.id}`)).body.content
    const newer = (await coach.get(`/api/versions/${v2.id}`)).body.content
    const diff = diffBreakdowns(older, newer)
    expect(diff.find(e => e.id === steps.at(-2)!.id)?.changes).toContain('reworded')
    expect(summariseDiff(diff)).toMatchObject({ added: 1, removed: 0, reworded: 1 })

    const audit = (await a.client.get('/api/audit')).body as Array<{ action: string, targetId: string }>
    expect(audit.filter(e => e.targetId === draft.id).map(e => e.action).sort()).toEqual(['version.draft_started', 'version.published', 'version.retired', 'version.saved'])
  })

  it('a stale autosave answers 409 with the current revision and leaves the newer content intact', async () => {
    const job = await newJob(coach)
    const draft = await startDraft(coach, job.id)
    const adminsEdit = content(['Admin wrote this'])
    const coachsEdit = content(['Coach wrote this'])
    // Both opened the draft at revision 0; the admin saves first.
    expect((await save(a.client, draft.id, 0, adminsEdit)).body.revision).toBe(1)
    const stale = await save(coach, draft.id, 0, coachsEdit)
    expect(stale.status).toBe(409)
    expect(stale.body.data.currentRevision).toBe(1)
    expect(stale.body.message).toMatch(/Reload/)
    expect((await coach.get(`/api/versions/${draft.id}`)).body).toMatchObject({ revision: 1, content: adminsEdit })
    // After reloading, the coach's save goes through.
    expect((await save(coach, draft.id, 1, coachsEdit)).body.revision).toBe(2)
  })

  it('of several saves sent at once from the same revision exactly one wins', async () => {
    const job = await newJob(coach)
    const draft = await startDraft(coach, job.id)
    const edits = Array.from({ length: 6 }, (_, i) => content([`Edit ${i}`]))
    const replies = await Promise.all(edits.map(e => save(coach, draft.id, 0, e)))
    expect(replies.map(r => r.status).sort()).toEqual([200, 409, 409, 409, 409, 409])
    const winner = edits[replies.findIndex(r => r.status === 200)]
    expect((await coach.get(`/api/versions/${draft.id}`)).body).toMatchObject({ revision: 1, content: winner })
  })

  it('a missing version answers 404 to a save, and a bad body 422 by field', async () => {
    expect((await save(coach, randomUUID(), 0, content())).status).toBe(404)
    const job = await newJob(coach)
    const draft = await startDraft(coach, job.id)
    const bad = await coach.patch(`/api/versions/${draft.id}`, { revision: 0, content: { units: [{ id: 'x', steps: [] }] } })
    expect(bad.status).toBe(422)
    expect(Object.keys(bad.body.data.fieldErrors)).toEqual(['content.units.0.id'])
  })

  it('refuses a photo that is not an upload of the organisation, by field path, and saves nothing', async () => {
    const job = await newJob(coach)
    const draft = await startDraft(coach, job.id)
    const body = content()
    body.units[0]!.steps[1]!.photoId = randomUUID()
    body.units[0]!.steps[0]!.keyPoints[1]!.photoId = randomUUID()
    const res = await save(coach, draft.id, 0, body)
    expect(res.status).toBe(422)
    expect(Object.keys(res.body.data.fieldErrors).sort()).toEqual(['units.0.steps.0.keyPoints.1.photoId', 'units.0.steps.1.photoId'])
    expect((await coach.get(`/api/versions/${draft.id}`)).body.revision).toBe(0)
  })

  it('takes a photo uploaded in the organisation and refuses one of another organisation', async () => {
    const own = await coach.post('/api/uploads', photoForm())
    const theirs = await b.client.post('/api/uploads', photoForm())
    expect([own.status, theirs.status], own.text + theirs.text).toEqual([201, 201])
    const job = await newJob(coach)
    const draft = await startDraft(coach, job.id)
    const body = content()
    body.units[0]!.steps[0]!.photoId = own.body.id
    body.units[0]!.steps[1]!.photoId = theirs.body.id
    const refused = await save(coach, draft.id, 0, body)
    expect(refused.status).toBe(422)
    expect(refused.body.data.fieldErrors).toEqual({ 'units.0.steps.1.photoId': ['This photo was not found in your organisation. Upload it again.'] })

    body.units[0]!.steps[1]!.photoId = null
    body.units[0]!.steps[1]!.keyPoints[0]!.photoId = own.body.id
    expect((await save(coach, draft.id, 0, body)).status).toBe(200)
    const published = await a.client.post(`/api/versions/${draft.id}/publish`, { changeNote: 'With photos.' })
    expect(published.status, published.text).toBe(200)
    expect(published.body.content).toEqual(body)
  })

  it('publish needs a change note (422)', async () => {
    const job = await newJob(coach)
    const draft = await startDraft(coach, job.id)
    await save(coach, draft.id, 0, content())
    for (const body of [{}, { changeNote: '  ' }]) {
      const res = await a.client.post(`/api/versions/${draft.id}/publish`, body)
      expect(res.status).toBe(422)
      expect(res.body.data.fieldErrors.changeNote).toEqual(['Say what changed in this version.'])
    }
    expect((await coach.get(`/api/versions/${draft.id}`)).body.status).toBe('draft')
  })

  it('publish with an empty step text answers 422 with the field path, and an empty draft cannot be published', async () => {
    const job = await newJob(coach)
    const draft = await startDraft(coach, job.id)
    const empty = await a.client.post(`/api/versions/${draft.id}/publish`, { changeNote: 'Nothing yet.' })
    expect(empty.status).toBe(422)
    expect(empty.body.data.fieldErrors.units).toEqual(['Add at least one important step before publishing.'])

    await save(coach, draft.id, 0, content(['Weigh the flour', '', 'Knead']))
    const res = await a.client.post(`/api/versions/${draft.id}/publish`, { changeNote: 'First version.' })
    expect(res.status).toBe(422)
    expect(res.body.data.fieldErrors).toEqual({ 'units.0.steps.1.text': ['Step 2 has no text.'] })
    expect((await coach.get(`/api/versions/${draft.id}`)).body.status).toBe('draft')
  })

  it('retires only a published version; the job then has none published', async () => {
    const { job, versionId } = await publishedJob()
    const draft = await startDraft(coach, job.id)
    expect((await a.client.post(`/api/versions/${draft.id}/retire`)).status).toBe(409)
    const res = await a.client.post(`/api/versions/${versionId}/retire`)
    expect(res.status, res.text).toBe(200)
    expect(res.body).toMatchObject({ id: versionId, status: 'retired' })
    expect((await a.client.post(`/api/versions/${versionId}/retire`)).status).toBe(409)
    expect((await coach.get('/api/jobs')).body.find((j: { id: string }) => j.id === job.id).published).toBeNull()
  })

  it('coaches publish only when the organisation allows it', async () => {
    const job = await newJob(coach)
    const draft = await startDraft(coach, job.id)
    await save(coach, draft.id, 0, content())
    const refused = await coach.post(`/api/versions/${draft.id}/publish`, { changeNote: 'By the coach.' })
    expect(refused.status).toBe(403)
    expect(refused.body.message).toMatch(/only admins publish/)
    expect((await coach.get(`/api/versions/${draft.id}`)).body.status).toBe('draft')

    expect((await a.client.patch('/api/organisation', { coachesMayPublish: true })).status).toBe(200)
    try {
      const allowed = await coach.post(`/api/versions/${draft.id}/publish`, { changeNote: 'By the coach.' })
      expect(allowed.status, allowed.text).toBe(200)
      expect(allowed.body).toMatchObject({ status: 'published', publishedByName: 'Test coach' })
      expect((await coach.post(`/api/versions/${draft.id}/retire`)).status).toBe(200)
    }
    finally {
      await a.client.patch('/api/organisation', { coachesMayPublish: false })
    }
    expect((await auditor.post(`/api/versions/${draft.id}/publish`, { changeNote: 'By the auditor.' })).status).toBe(403)
  })
})

describe('what learners see', () => {
  // A learner asking for a draft gets 404, not 403: to a learner a draft is not there yet,
  // the same answer as for a missing version (so ids of unfinished work reveal nothing).
  it('reads a published version but not a draft; lists and job pages show no drafts', async () => {
    const { job, versionId, content: body } = await publishedJob()
    const draft = await startDraft(coach, job.id)

    const readable = await learner.get(`/api/versions/${versionId}`)
    expect(readable.status).toBe(200)
    expect(readable.body).toMatchObject({ status: 'published', content: body, job: { id: job.id, workAreaName: 'Bakehouse', ppe: ['Hair net', 'Apron'] } })
    expect((await learner.get(`/api/versions/${draft.id}`)).status).toBe(404)
    expect((await auditor.get(`/api/versions/${draft.id}`)).status).toBe(200)

    expect((await learner.get('/api/jobs')).body.find((j: { id: string }) => j.id === job.id)).toMatchObject({ published: { id: versionId }, draft: null })
    expect((await learner.get(`/api/jobs/${job.id}`)).body.versions.map((v: { id: string }) => v.id)).toEqual([versionId])
    expect((await learner.get(`/api/jobs/${job.id}/versions`)).status).toBe(403)
    expect((await learner.get(`/api/versions/${versionId}/export`)).status).toBe(403)
    expect((await learner.patch(`/api/versions/${draft.id}`, { revision: 0, content: body })).status).toBe(403)
  })
})

describe('export and import', () => {
  it('round-trips the content and job fields into another organisation', async () => {
    const { versionId, content: body } = await publishedJob(content(['Weigh the flour', 'Mix the dough', 'Check the dough temperature']))
    const exported = await auditor.get(`/api/versions/${versionId}/export`)
    expect(exported.status).toBe(200)
    expect(exported.headers.get('content-type')).toMatch(/^application\/json/)
    expect(exported.headers.get('content-disposition')).toMatch(/^attachment; filename="fourfold-mix-bread-dough-[a-z0-9]+-v1\.json"$/)
    const doc = exported.body
    expect(doc).toMatchObject({ format: 'fourfold.breakdown', formatVersion: 1, version: { number: 1, status: 'published', changeNote: 'First version.' }, breakdown: body })
    expect(doc.job).toEqual({
      title: expect.any(String),
      purpose: 'Dough that rises evenly.',
      hazards: [{ category: 'moving-parts', description: 'Spiral mixer hook' }, { category: 'lifting', description: '' }],
      ppe: ['Hair net', 'Apron'],
      toolsAndMaterials: ['Scale', 'Spiral mixer'],
      workplaceArrangement: 'Flour sacks to the left of the scale.',
      coverageTarget: 3,
      workAreaName: 'Bakehouse',
    })

    const imported = await b.client.post('/api/jobs/import', doc)
    expect(imported.status, imported.text).toBe(201)
    expect(imported.body).toMatchObject({ photosDropped: 0, workAreaMatched: true })
    const { jobId, versionId: bVersionId } = imported.body

    const bVersion = (await b.client.get(`/api/versions/${bVersionId}`)).body
    expect(bVersion).toMatchObject({ jobId, number: 1, status: 'draft', revision: 0, basedOnVersionId: null })
    expect(bVersion.content).toEqual(body)

    // Exported again from B, the job and breakdown are the same document.
    const again = (await b.client.get(`/api/versions/${bVersionId}/export`)).body
    expect(again.job).toEqual(doc.job)
    expect(again.breakdown).toEqual(doc.breakdown)

    // The job is B's: A does not see it, B's work area was matched by name.
    const bJob = (await b.client.get(`/api/jobs/${jobId}`)).body
    expect(bJob.workAreaId).toBe((await b.client.get('/api/work-areas')).body[0].id)
    expect((await a.client.get(`/api/jobs/${jobId}`)).status).toBe(404)
    expect((await a.client.get(`/api/versions/${bVersionId}`)).status).toBe(404)
  })

  it('drops photos and an unknown work area, and says so', async () => {
    const { versionId } = await publishedJob()
    const doc = (await coach.get(`/api/versions/${versionId}/export`)).body
    doc.job.workAreaName = 'Warehouse'
    doc.breakdown.units[0].steps[0].photoId = randomUUID()
    doc.breakdown.units[0].steps[0].keyPoints[0].photoId = randomUUID()
    const res = await b.client.post('/api/jobs/import', doc)
    expect(res.status, res.text).toBe(201)
    expect(res.body).toMatchObject({ photosDropped: 2, workAreaMatched: false })
    const imported = (await b.client.get(`/api/versions/${res.body.versionId}`)).body
    expect(imported.job.workAreaName).toBeNull()
    expect(imported.content.units[0].steps[0].photoId).toBeNull()
    expect(imported.content.units[0].steps[0].keyPoints[0].photoId).toBeNull()
  })

  it('refuses a malformed document with field-level errors and creates nothing', async () => {
    const { versionId } = await publishedJob()
    const doc = (await coach.get(`/api/versions/${versionId}/export`)).body
    const before = (await b.client.get('/api/jobs?archived=1')).body.length
    doc.job.title = ''
    doc.job.hazards[0].category = 'ovens'
    doc.breakdown.units[0].steps[1].keyPoints[0].kind = 'tip'
    delete doc.breakdown.units[0].steps[0].id
    const res = await b.client.post('/api/jobs/import', doc)
    expect(res.status).toBe(422)
    expect(res.body.data.fieldErrors).toEqual({
      'job.title': ['Give the job a title.'],
      'job.hazards.0.category': ['Choose the kind of hazard.'],
      'breakdown.units.0.steps.0.id': ['Each element needs a valid id.'],
      'breakdown.units.0.steps.1.keyPoints.0.kind': ['Choose a kind: quality, safety or knack.'],
    })
    expect((await b.client.post('/api/jobs/import', { ...doc, format: 'csv' })).status).toBe(422)
    expect((await b.client.post('/api/jobs/import', '{"format": ')).status).toBe(400)
    expect((await b.client.get('/api/jobs?archived=1')).body.length).toBe(before)
  })
})
