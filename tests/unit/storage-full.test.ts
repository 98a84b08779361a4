// The tablet's storage full (app/utils/storage-full.ts, appendEvent in app/utils/localdb.ts): a
// mark IndexedDB refuses with QuotaExceededError rejects as StorageFullError with nothing of it
// kept, every mark recorded before stays, numbering carries on once there is room, and the coach
// reads what to do. fake-indexeddb stands in for the browser; a write to a full store fails the way
// a browser's does: the request errors with QuotaExceededError and its transaction aborts with it.
import 'fake-indexeddb/auto'
import Dexie from 'dexie'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { appendEvent, closeLocalDb, lessonEvents, localDb, saveLesson, updateLesson, type LocalLesson } from '../../app/utils/localdb'
import { appendCheckEvent, saveCheck } from '../../app/utils/local-checks'
import { StorageFullError, isStorageFull, saveFailureWords } from '../../app/utils/storage-full'

const lesson = (id: string): LocalLesson => ({
  id, organisationId: 'org', coachUserId: 'u', learnerId: 'l', jobId: 'j', versionId: 'v', place: 'Slicer 2',
  startedAt: 1, updatedAt: 1, cursor: { stage: 'tryout', pass: 'T1-1', index: 0 }, prepare: {}, helper: '', decision: null,
  acknowledgement: null, signedOffAt: null, stageSeconds: {}, synced: 0,
})

/** Stores whose writes are refused as if the quota were reached; empty: storage has room. */
let full = new Set<string>()
type Store = IDBObjectStore & { transaction: IDBTransaction & { _execRequestAsync: (o: { operation: () => unknown, source: unknown }) => IDBRequest } }
const realAdd = IDBObjectStore.prototype.add
const realPut = IDBObjectStore.prototype.put
function refuseWhenFull(real: typeof realAdd) {
  return function (this: Store, ...args: Parameters<typeof realAdd>) {
    if (!full.has(this.name)) return real.apply(this, args)
    // fake-indexeddb's own request machinery: the operation fails, the request fires its error and
    // the transaction aborts with the error's name, as the browser does at a full quota.
    return this.transaction._execRequestAsync({
      operation: () => {
        throw new DOMException('The quota has been exceeded.', 'QuotaExceededError')
      },
      source: this,
    })
  }
}

beforeEach(async () => {
  await closeLocalDb()
  indexedDB.deleteDatabase('fourfold')
  full = new Set()
  IDBObjectStore.prototype.add = refuseWhenFull(realAdd)
  IDBObjectStore.prototype.put = refuseWhenFull(realPut)
})
afterEach(async () => {
  IDBObjectStore.prototype.add = realAdd
  IDBObjectStore.prototype.put = realPut
  await closeLocalDb()
})

const bySeq = async () => (await lessonEvents('L')).sort((a, b) => a.seq - b.seq).map(e => [e.elementId, e.seq])
const mark = (elementId: string) => appendEvent({ lessonId: 'L', pass: 'T1-1', elementId, kind: 'mark', value: 'unaided' })

describe('the tablet\'s storage full', () => {
  it('refuses the mark with StorageFullError, keeps every earlier mark, and numbers on once there is room', async () => {
    await saveLesson(lesson('L'))
    const before = [await mark('s1'), await mark('s2')]

    full = new Set(['events'])
    const refused = await mark('s3').then(() => null, (error: unknown) => error)
    expect(refused).toBeInstanceOf(StorageFullError)
    expect(isStorageFull(refused)).toBe(true)
    // The refused transaction kept nothing: not the event, not the sequence number.
    expect(await bySeq()).toEqual([['s1', 1], ['s2', 2]])
    expect((await localDb().meta.get('seq'))?.value).toBe(2)

    // Still full after a reload of the page (a new connection): the earlier marks are all there.
    await closeLocalDb()
    expect(await bySeq()).toEqual([['s1', 1], ['s2', 2]])
    expect(await mark('s3').then(() => 'saved', (error: unknown) => (error as Error).name)).toBe('StorageFullError')

    full = new Set()
    const after = await mark('s3')
    expect(after.seq).toBe(3)
    expect(await bySeq()).toEqual([['s1', 1], ['s2', 2], ['s3', 3]])
    expect((await lessonEvents('L')).map(e => e.id).sort()).toEqual([...before, after].map(e => e.id).sort())
  })

  it('recognises Dexie\'s own wrapping of the quota error, for the writes that go through Dexie', async () => {
    await saveLesson(lesson('M'))
    await saveCheck({ id: 'C', organisationId: 'org', coachUserId: 'u', learnerId: 'l', jobId: 'j', versionId: 'v', lessonId: null, startedAt: 1, updatedAt: 1, elements: ['s1'], note: '', finishedAt: null, intervalIndex: 0, synced: 0 })
    full = new Set(['lessons', 'checkEvents', 'meta'])
    const cursorMove = await updateLesson('M', { cursor: { stage: 'tryout', pass: 'T1-1', index: 1 } }).then(() => null, (error: unknown) => error)
    expect(cursorMove).toBeInstanceOf(Dexie.DexieError)
    expect(isStorageFull(cursorMove)).toBe(true)
    const checkMark = await appendCheckEvent({ checkId: 'C', elementId: 's1', kind: 'mark', value: 'unaided' }).then(() => null, (error: unknown) => error)
    expect(isStorageFull(checkMark)).toBe(true)
    full = new Set()
    expect((await localDb().checkEvents.toArray())).toEqual([])
    expect((await localDb().lessons.get('M'))?.cursor.index).toBe(0)
  })

  it('tells other failures apart from a full store', () => {
    expect(isStorageFull(new DOMException('x', 'QuotaExceededError'))).toBe(true)
    expect(isStorageFull({ name: 'AbortError', inner: { name: 'QuotaExceededError' } })).toBe(true)
    expect(isStorageFull({ name: 'BulkError', failures: [{ name: 'ConstraintError' }, { name: 'QuotaExceededError' }] })).toBe(true)
    expect(isStorageFull({ name: 'Error', code: 22 })).toBe(true)
    expect(isStorageFull(new DOMException('x', 'ConstraintError'))).toBe(false)
    expect(isStorageFull(new DOMException('x', 'AbortError'))).toBe(false)
    expect(isStorageFull(null)).toBe(false)
  })

  it('says in words what happened and what to do', () => {
    expect(saveFailureWords('Unaided for step 2', new StorageFullError(null))).toBe('Not saved: unaided for step 2. This tablet\'s storage is full. Everything recorded before it is safe on this tablet: sync now (Today, Send now) so it reaches the server, then free space on the tablet (remove photos, videos or apps it does not need) and try again.')
    expect(saveFailureWords('The note', new Error('disk error'))).toBe('Not saved: the note. The tablet\'s storage refused it (disk error); try again.')
  })
})
