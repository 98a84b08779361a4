import 'fake-indexeddb/auto'
import Dexie, { type ObservabilitySet } from 'dexie'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { appendEvent, closeLocalDb, deviceId, getLesson, lessonEvents, localDb, markEventsSynced, offlineLearners, saveLesson, storeReferenceData, unsyncedEvents, type LocalLesson } from '../../app/utils/localdb'

const lesson = (id: string): LocalLesson => ({
  id, organisationId: 'org', coachUserId: 'u', learnerId: 'l', jobId: 'j', versionId: 'v', place: 'Slicer 2',
  startedAt: 1, updatedAt: 1, cursor: { stage: 'tryout', pass: 'T3-1', index: 2 }, prepare: {}, helper: '', decision: null,
  acknowledgement: null, signedOffAt: null, stageSeconds: {}, synced: 0,
})

beforeEach(async () => {
  await closeLocalDb()
  indexedDB.deleteDatabase('fourfold')
})
afterEach(() => closeLocalDb())

describe('local store', () => {
  it('keeps one device id', async () => {
    const a = await deviceId()
    await closeLocalDb()
    expect(await deviceId()).toBe(a)
  })

  it('gives each event the next per-device sequence, even when appended together', async () => {
    await saveLesson(lesson('L1'))
    const events = await Promise.all(Array.from({ length: 20 }, (_, i) => appendEvent({ lessonId: 'L1', pass: 'T1-1', elementId: `s${i}`, kind: 'mark', value: 'unaided' }, 1000 + i)))
    expect(events.map(e => e.seq).sort((a, b) => a - b)).toEqual(Array.from({ length: 20 }, (_, i) => i + 1))
    expect(new Set(events.map(e => e.id)).size).toBe(20)
    expect((await getLesson('L1'))!.updatedAt).toBeGreaterThanOrEqual(1000)
  })

  it('keeps numbering right when the stored sequence moves under a tab (another tab, a spot check mark)', async () => {
    await saveLesson(lesson('L4'))
    const mark = (i: number) => appendEvent({ lessonId: 'L4', pass: 'T1-1', elementId: `s${i}`, kind: 'mark', value: 'cued' }, 2000 + i)
    const announced: string[] = []
    const listen = (parts: ObservabilitySet) => announced.push(...Object.keys(parts))
    Dexie.on.storagemutated.subscribe(listen)
    await mark(0)
    await new Promise(resolve => setTimeout(resolve, 0))
    Dexie.on.storagemutated.unsubscribe(listen)
    // Observers (the outbox counts, liveQuery, other tabs) hear of the mark as of a write through Dexie.
    expect(announced).toEqual(expect.arrayContaining(['idb://fourfold/events/', 'idb://fourfold/events/synced', 'idb://fourfold/events/lessonId']))
    // Taps issued together after the first take their numbers from memory, checked in their transactions.
    const together = await Promise.all(Array.from({ length: 10 }, (_, i) => mark(i + 1)))
    expect(together.map(e => e.seq)).toEqual(Array.from({ length: 10 }, (_, i) => i + 2))
    // Another writer of this device's sequence (another tab) takes 12 to 14.
    await localDb().meta.put({ key: 'seq', value: 14 })
    const after = await Promise.all([mark(20), mark(21), mark(22)])
    expect(after.map(e => e.seq).sort((a, b) => a - b)).toEqual([15, 16, 17])
    const stored = (await lessonEvents('L4')).map(e => e.seq).sort((a, b) => a - b)
    expect(stored).toEqual([1, 2, 3, 4, 5, 6, 7, 8, 9, 10, 11, 15, 16, 17])
    expect((await localDb().meta.get('seq'))?.value).toBe(17)
    // The lesson's updatedAt follows the taps (written once for the run, before the lesson is read).
    expect((await getLesson('L4'))!.updatedAt).toBe(2022)
  })

  it('survives closing and reopening: the lesson, its cursor and every mark', async () => {
    await saveLesson(lesson('L2'))
    await appendEvent({ lessonId: 'L2', pass: 'T3-1', elementId: 'k1', kind: 'mark', value: 'cued' })
    await closeLocalDb()
    expect((await getLesson('L2'))!.cursor).toEqual({ stage: 'tryout', pass: 'T3-1', index: 2 })
    expect((await lessonEvents('L2')).map(e => [e.elementId, e.value])).toEqual([['k1', 'cued']])
  })

  it('keeps events in the outbox until they are marked synced', async () => {
    await saveLesson(lesson('L3'))
    const e1 = await appendEvent({ lessonId: 'L3', pass: 'T1-1', elementId: 's1', kind: 'mark', value: 'missed' })
    await appendEvent({ lessonId: 'L3', pass: 'T1-1', elementId: 's2', kind: 'mark', value: 'unaided' })
    expect(await unsyncedEvents()).toHaveLength(2)
    await markEventsSynced([e1.id])
    expect((await unsyncedEvents()).map(e => e.elementId)).toEqual(['s2'])
  })

  it('replaces one organisation\'s roster without touching another\'s', async () => {
    await storeReferenceData('org', { versions: [], learners: [{ id: 'a', organisationId: 'org', name: 'Zed', workAreaName: null, reference: '' }, { id: 'b', organisationId: 'org', name: 'Amal', workAreaName: null, reference: '' }] })
    await storeReferenceData('other', { versions: [], learners: [{ id: 'c', organisationId: 'other', name: 'Cy', workAreaName: null, reference: '' }] })
    await storeReferenceData('org', { versions: [], learners: [{ id: 'b', organisationId: 'org', name: 'Amal', workAreaName: null, reference: '' }] })
    expect((await offlineLearners('org')).map(l => l.name)).toEqual(['Amal'])
    expect((await offlineLearners('other')).map(l => l.name)).toEqual(['Cy'])
    expect(localDb().name).toBe('fourfold')
  })
})
