import 'fake-indexeddb/auto'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { appendEvent, closeLocalDb, getLesson, localDb, saveLesson, type LocalLesson } from '../../app/utils/localdb'
import { applyPushAnswer, outbox, planPushes, resolveRejection, storePulledScores, type SyncedEvent, type SyncedLesson } from '../../app/utils/sync-client'

const lesson = (id: string, updatedAt = 5): LocalLesson => ({
  id, organisationId: 'org', coachUserId: 'u', learnerId: 'l', jobId: 'j', versionId: 'v', place: '',
  startedAt: 1, updatedAt, cursor: { stage: 'tryout', pass: 'T1-1', index: 0 }, prepare: {}, helper: '', decision: null,
  acknowledgement: null, signedOffAt: null, stageSeconds: {}, synced: 0,
})

beforeEach(async () => {
  await closeLocalDb()
  indexedDB.deleteDatabase('fourfold')
})
afterEach(() => closeLocalDb())

describe('planning pushes', () => {
  it('keeps each push under the event limit and sends every event\'s lesson with it', () => {
    const lessons = [lesson('A'), lesson('B'), lesson('C')]
    const events = Array.from({ length: 25 }, (_, i) => ({ id: `e${i}`, lessonId: ['A', 'B'][i % 2]!, pass: 'T1-1', elementId: null, kind: 'mark' as const, value: 'unaided', clientTime: i, deviceId: 'd', seq: i + 1, synced: 0 as const }))
    const pushes = planPushes('d', lessons, events, 10)
    expect(pushes.map(p => p.events.length)).toEqual([10, 10, 5])
    for (const p of pushes) for (const e of p.events) expect(p.lessons.some(l => l.id === e.lessonId)).toBe(true)
    expect(pushes.flatMap(p => p.events.map(e => e.id)).sort()).toEqual(events.map(e => e.id).sort())
    // C has no events but changed fields: it is sent too.
    expect(pushes.flatMap(p => p.lessons.map(l => l.id))).toContain('C')
    expect(pushes[0]!.events[0]).not.toHaveProperty('synced')
  })
})

describe('applying the answer', () => {
  it('marks accepted items synced, keeps rejected ones with their reason until the coach decides', async () => {
    await saveLesson(lesson('L'))
    const good = await appendEvent({ lessonId: 'L', pass: 'T1-1', elementId: 's1', kind: 'mark', value: 'unaided' })
    const bad = await appendEvent({ lessonId: 'L', pass: 'T1-1', elementId: 's2', kind: 'mark', value: 'cued' })
    const stored = (await getLesson('L'))!
    const [push] = planPushes('d', [stored], [good, bad])
    await applyPushAnswer(push!, { accepted: ['L', good.id], rejected: [{ id: bad.id, reason: 'A different mark with this id is already stored.' }], scores: { L: { t1: 75, t2: null, t3: null, t4: null, order: null, recall: null, readiness: 'another-pass' } }, cursor: 9 })
    const waiting = await outbox('org')
    expect(waiting.events).toEqual([])
    expect(waiting.lessons).toEqual([])
    expect(waiting.rejectedEvents.map(e => [e.id, e.rejection!.reason])).toEqual([[bad.id, 'A different mark with this id is already stored.']])
    expect(((await getLesson('L')) as SyncedLesson).serverScore!.t1).toBe(75)

    await resolveRejection('event', bad.id, 'retry')
    expect((await outbox('org')).events.map(e => e.id)).toEqual([bad.id])
    await resolveRejection('event', bad.id, 'discard')
    expect(await localDb().events.get(bad.id)).toBeUndefined()
    expect(((await localDb().events.get(good.id)) as SyncedEvent).synced).toBe(1)
  })

  it('leaves a lesson waiting when it changed while its push was out', async () => {
    await saveLesson(lesson('M', 5))
    const [push] = planPushes('d', [(await getLesson('M'))!], [])
    await localDb().lessons.update('M', { updatedAt: 6, helper: 'Ask Bram' })
    await applyPushAnswer(push!, { accepted: ['M'], rejected: [], scores: {}, cursor: 1 })
    expect((await outbox('org')).lessons.map(l => l.id)).toEqual(['M'])
  })
})

describe('scores a pull brings', () => {
  it('land beside the lessons on this tablet, leave the rest of each lesson as it was and skip lessons not here', async () => {
    await saveLesson(lesson('A'))
    await saveLesson(lesson('B', 9))
    const score = (t1: number) => ({ t1, t2: null, t3: null, t4: null, order: null, recall: t1, readiness: 'another-pass' as const })
    await storePulledScores([{ id: 'A', score: score(60) }, { id: 'B', score: null }, { id: 'elsewhere', score: score(90) }])
    const a = (await getLesson('A')) as SyncedLesson
    expect(a.serverScore!.recall).toBe(60)
    expect(a).toMatchObject({ synced: 0, updatedAt: 5, cursor: { stage: 'tryout' } })
    expect(((await getLesson('B')) as SyncedLesson).serverScore).toBeUndefined()
    expect(await localDb().lessons.get('elsewhere')).toBeUndefined()
    // A later pull with a newer score replaces it.
    await storePulledScores([{ id: 'A', score: score(80) }])
    expect(((await getLesson('A')) as SyncedLesson).serverScore!.recall).toBe(80)
  })
})
