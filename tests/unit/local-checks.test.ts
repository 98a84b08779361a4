// Spot checks on the tablet: marks share the device sequence with lesson marks and are committed
// before the promise resolves; pushes carry each check with its marks (and the lesson it follows
// when that is waiting too); the answer settles them or keeps the reason; a pull stores the plan
// and what is due.
import 'fake-indexeddb/auto'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { appendEvent, closeLocalDb, localDb, saveLesson, type LocalCheck, type LocalLesson } from '../../app/utils/localdb'
import { appendCheckEvent, dueChecksOf, eventsOfCheck, getCheck, planItemsOf, saveCheck, storePulledChecks } from '../../app/utils/local-checks'
import { applyPushAnswer, outbox, planPushes, resolveRejection } from '../../app/utils/sync-client'

const lesson = (id: string): LocalLesson => ({
  id, organisationId: 'org', coachUserId: 'u', learnerId: 'l', jobId: 'j', versionId: 'v', place: '',
  startedAt: 1, updatedAt: 5, cursor: { stage: 'followup', pass: null, index: 0 }, prepare: {}, helper: '', decision: 'ready',
  acknowledgement: null, signedOffAt: 5, stageSeconds: {}, synced: 0,
})
const check = (id: string, lessonId: string | null = null): LocalCheck => ({
  id, organisationId: 'org', coachUserId: 'u', learnerId: 'l', jobId: 'j', versionId: 'v', lessonId, startedAt: 10, updatedAt: 10,
  elements: ['s1', 'k1'], note: '', finishedAt: null, intervalIndex: 0, synced: 0,
})

beforeEach(async () => {
  await closeLocalDb()
  indexedDB.deleteDatabase('fourfold')
})
afterEach(() => closeLocalDb())

describe('marks of a check on the tablet', () => {
  it('take the next device sequence, shared with lesson marks', async () => {
    await saveLesson(lesson('L'))
    await saveCheck(check('C'))
    const a = await appendEvent({ lessonId: 'L', pass: 'T1-1', elementId: 's1', kind: 'mark', value: 'unaided' })
    const b = await appendCheckEvent({ checkId: 'C', elementId: 's1', kind: 'mark', value: 'cued' }, 77)
    const c = await appendEvent({ lessonId: 'L', pass: 'T1-1', elementId: 's2', kind: 'mark', value: 'unaided' })
    expect([a.seq, b.seq, c.seq]).toEqual([1, 2, 3])
    expect(b.deviceId).toBe(a.deviceId)
    expect((await eventsOfCheck('C')).map(e => e.id)).toEqual([b.id])
    expect((await getCheck('C'))!.updatedAt).toBe(77)
  })
})

describe('pushing checks', () => {
  it('carries each check with its marks, after the lesson it follows, and settles the answer', async () => {
    await saveLesson(lesson('L'))
    await saveCheck(check('C', 'L'))
    await saveCheck(check('D'))
    const marks = [
      await appendCheckEvent({ checkId: 'C', elementId: 's1', kind: 'mark', value: 'unaided' }, 20),
      await appendCheckEvent({ checkId: 'C', elementId: 'k1', kind: 'mark', value: 'missed' }, 21),
    ]
    const box = await outbox('org')
    expect(box.checks.map(c => c.id).sort()).toEqual(['C', 'D'])
    expect(box.checkEvents).toHaveLength(2)
    const pushes = planPushes('dev', box.lessons, box.events, 1, box.checks, box.checkEvents)
    for (const p of pushes) {
      for (const e of p.events) if ('checkId' in e) expect(p.checks.some(c => c.id === e.checkId)).toBe(true)
      for (const c of p.checks) if (c.lessonId) expect(p.lessons.some(l => l.id === c.lessonId)).toBe(true)
      for (const e of p.events) expect(e).not.toHaveProperty('synced')
    }
    expect(pushes.flatMap(p => p.checks.map(c => c.id))).toContain('D')
    // Push by push, as useSync sends them: D refused, everything else taken, C's outcome kept.
    for (const p of pushes) {
      await applyPushAnswer(p, {
        accepted: [...p.lessons.map(l => l.id as string), ...p.checks.map(c => c.id as string).filter(id => id !== 'D'), ...p.events.map(e => e.id)],
        rejected: p.checks.some(c => c.id === 'D') ? [{ id: 'D', reason: 'The learner is not in this organisation\'s roster.' }] : [],
        scores: {},
        checks: p.checks.some(c => c.id === 'C') ? { C: { outcome: 'reteach', nextIntervalIndex: 0, nextDueAt: 123 } } : {},
        cursor: 1,
      })
    }
    const after = await outbox('org')
    expect(after.checks).toEqual([])
    expect(after.checkEvents).toEqual([])
    expect(after.rejectedChecks.map(c => [c.id, c.rejection!.reason])).toEqual([['D', 'The learner is not in this organisation\'s roster.']])
    expect((await getCheck('C'))!.serverResult).toEqual({ outcome: 'reteach', nextIntervalIndex: 0, nextDueAt: 123 })
    expect((await localDb().checkEvents.get(marks[0]!.id))!.synced).toBe(1)

    await resolveRejection('check', 'D', 'retry')
    expect((await outbox('org')).checks.map(c => c.id)).toEqual(['D'])
    await resolveRejection('check', 'D', 'discard')
    expect(await getCheck('D')).toBeUndefined()
  })
})

describe('pulling checks, plan and due list', () => {
  it('keeps a check made here as it is (with the server result), stores others read-only, replaces plan and due lists', async () => {
    await saveCheck(check('C'))
    const pulledCheck = (id: string) => ({ id, coachUserId: 'u2', learnerId: 'l', jobId: 'j', versionId: 'v', lessonId: null, startedAt: 1, elements: ['s1'], note: 'x', finishedAt: 2, intervalIndex: 0, updatedAt: 2, result: { outcome: 'clean' as const, nextIntervalIndex: 1, nextDueAt: 99 } })
    const due = (key: string) => ({ key, organisationId: 'org', learnerId: 'l', jobId: key, versionId: 'v', lessonId: null, dueAt: 5, intervalIndex: 0 })
    await storePulledChecks('org', { full: true, checks: [pulledCheck('C'), pulledCheck('E')], planItems: [{ id: 'p1', organisationId: 'org', learnerId: 'l', jobId: 'j', targetDate: '2026-05-01', reason: 'new-job' }], removedPlanItems: [], dueChecks: [due('a'), due('b')] })
    expect((await getCheck('C'))).toMatchObject({ note: '', synced: 0, serverResult: { outcome: 'clean' } })
    expect((await getCheck('E'))).toMatchObject({ fromServer: true, synced: 1, note: 'x' })
    expect((await outbox('org')).checks.map(c => c.id)).toEqual(['C'])
    await storePulledChecks('org', { full: false, checks: [], planItems: [], removedPlanItems: ['p1'], dueChecks: [due('b')] })
    expect(await planItemsOf('org')).toEqual([])
    expect((await dueChecksOf('org')).map(d => d.key)).toEqual(['b'])
  })
})
