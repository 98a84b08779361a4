// GET /api/me/training over HTTP: a learner's own study cards and records. Only their own lessons
// and checks; only breakdowns they were taught (a signed-off lesson on the job), at the version they
// were taught; a newer published version is named, a draft never shows; other roles are refused.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { startServer, type TestServer } from '../support/server'
import { addMember, signUp } from '../support/accounts'
import { publishedJob, slicerContent } from '../support/breakdowns'
import { linkedLearner, spotCheck, teach, type Taught } from '../support/people'
import type { MyTraining } from '../../shared/types/people'
import type { BreakdownContent } from '../../shared/schemas/breakdown'

let server: TestServer
let admin: Awaited<ReturnType<typeof signUp>>
let coach: Awaited<ReturnType<typeof addMember>>
let ilse: Awaited<ReturnType<typeof linkedLearner>>
let tomas: Awaited<ReturnType<typeof linkedLearner>>
let slicer: Taught
let sealer: Taught
let weigher: Taught
let ilseSlicerLesson: string
let ilseCheck: string

const DRAFT_WORDS = 'Unpublished draft step: torque the hub nut'

beforeAll(async () => {
  server = await startServer()
  admin = await signUp(server, 'Hollowmere Bakery')
  coach = await addMember(server, admin.client, 'coach')
  ilse = await linkedLearner(server, admin.client, 'Ilse Brannagh')
  tomas = await linkedLearner(server, admin.client, 'Tomas Feld')
  slicer = { learnerId: ilse.learnerId, ...(await publishedJob(admin.client)) }
  sealer = { learnerId: tomas.learnerId, ...(await publishedJob(admin.client, slicerContent(), 'Thread film on the bag sealer')) }
  weigher = { learnerId: ilse.learnerId, ...(await publishedJob(admin.client, slicerContent(), 'Check-weigh a tray')) }
  ilseSlicerLesson = (await teach(coach, slicer, { daysAgo: 6 })).lessonId
  ilseCheck = (await spotCheck(coach, slicer, { daysAgo: 4, lessonId: ilseSlicerLesson })).checkId
  // Tomas was taught the sealer; Ilse's weigher lesson is still going (not signed off).
  await teach(coach, sealer, { daysAgo: 3 })
  await teach(coach, weigher, { daysAgo: 1, signedOff: false })
}, 180_000)
afterAll(() => server?.stop())

async function training(client: typeof ilse.client) {
  const res = await client.get<MyTraining>('/api/me/training')
  expect(res.status, res.text).toBe(200)
  return res.body
}

describe('GET /api/me/training', () => {
  it('gives the learner the breakdowns they were taught, as taught, with their own records', async () => {
    const mine = await training(ilse.client)
    expect(mine.learner).toEqual({ id: ilse.learnerId, name: 'Ilse Brannagh' })
    // Trained on = a signed-off lesson: the slicer only (the weigher lesson is not signed off; the sealer is Tomas's).
    expect(mine.cards.map(c => [c.jobTitle, c.versionNumber])).toEqual([['Change the slicer blade set', 1]])
    expect(mine.cards[0]).toMatchObject({ versionId: slicer.versionId, lessonId: ilseSlicerLesson, newer: null, content: slicer.content })
    expect(mine.cards[0]!.job.hazards).toEqual([{ category: 'sharp-edges', description: 'Blades' }])
    // Records: both of her lessons (the unfinished one too), her check, her state per job.
    expect(mine.lessons.map(l => l.jobTitle).sort()).toEqual(['Change the slicer blade set', 'Check-weigh a tray'])
    expect(mine.checks.map(c => [c.id, c.outcome])).toEqual([[ilseCheck, 'clean']])
    const slicerState = mine.jobs.find(j => j.jobId === slicer.jobId)!
    // A clean first check moves one step up the taper: the next is 2 days after it (DESIGN.md §8).
    expect(slicerState).toMatchObject({ status: 'check-due', lastCheckId: ilseCheck })
    expect(mine.jobs.find(j => j.jobId === weigher.jobId)).toMatchObject({ status: 'in-training' })
    expect(JSON.stringify(mine)).not.toContain('Tomas')
    expect(JSON.stringify(mine)).not.toContain(sealer.jobId)
  })

  it('gives another learner only theirs', async () => {
    const his = await training(tomas.client)
    expect(his.cards.map(c => c.jobTitle)).toEqual(['Thread film on the bag sealer'])
    expect(his.lessons).toHaveLength(1)
    expect(his.checks).toEqual([])
    const text = JSON.stringify(his)
    for (const id of [ilse.learnerId, ilseSlicerLesson, ilseCheck, slicer.jobId, weigher.jobId]) expect(text).not.toContain(id)
  })

  it('never shows a draft; names a newer published version but keeps the one taught', async () => {
    const draft = await admin.client.post(`/api/jobs/${slicer.jobId}/versions`)
    expect(draft.status, draft.text).toBe(201)
    const content: BreakdownContent = structuredClone(slicer.content)
    content.units[0]!.steps.push({ id: randomUUID(), text: DRAFT_WORDS, photoId: null, keyPoints: [] })
    const saved = await admin.client.patch(`/api/versions/${draft.body.id}`, { revision: draft.body.revision, content })
    expect(saved.status, saved.text).toBe(200)

    const whileDraft = await training(ilse.client)
    expect(JSON.stringify(whileDraft)).not.toContain(DRAFT_WORDS)
    expect(JSON.stringify(whileDraft)).not.toContain(draft.body.id)
    expect(whileDraft.cards[0]).toMatchObject({ versionNumber: 1, newer: null })

    const published = await admin.client.post(`/api/versions/${draft.body.id}/publish`, { changeNote: 'Hub nut step added.' })
    expect(published.status, published.text).toBe(200)
    const after = await training(ilse.client)
    expect(after.cards.map(c => [c.versionId, c.versionNumber])).toEqual([[slicer.versionId, 1]])
    expect(after.cards[0]!.newer).toMatchObject({ number: 2 })
    expect(JSON.stringify(after.cards)).not.toContain(DRAFT_WORDS)
    // The rule flags the new version for re-teaching.
    expect(after.jobs.find(j => j.jobId === slicer.jobId)).toMatchObject({ status: 'reteach', reteachBecause: 'new-version', currentVersionNumber: 2 })
  })

  it('is for learners only', async () => {
    for (const client of [admin.client, coach.client]) expect((await client.get('/api/me/training')).status).toBe(403)
    const auditor = await addMember(server, admin.client, 'auditor')
    expect((await auditor.client.get('/api/me/training')).status).toBe(403)
  })

  it('answers 404 with words to act on when the account has no roster entry', async () => {
    // A coach made a learner has an account but no roster entry of their own.
    const moved = await addMember(server, admin.client, 'coach')
    const patched = await admin.client.patch(`/api/members/${moved.membershipId}`, { role: 'learner' })
    expect(patched.status, patched.text).toBe(200)
    const res = await moved.client.get('/api/me/training')
    expect(res.status).toBe(404)
    expect(res.body.message).toMatch(/not on this organisation's roster/)
  })

  it('keeps each organisation apart', async () => {
    const other = await signUp(server, 'Elsewhere Mill')
    const outsider = await linkedLearner(server, other.client, 'Bruno Hale')
    const his = await training(outsider.client)
    expect(his).toMatchObject({ learner: { id: outsider.learnerId }, cards: [], lessons: [], checks: [], jobs: [] })
  })
})
