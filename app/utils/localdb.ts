// The tablet's own store (IndexedDB through Dexie), opened lazily and only in the browser.
// It holds what a lesson needs with the network off: published breakdowns and their photos,
// the roster, the device id, lessons and the outbox of lesson events (DESIGN.md §7).
import Dexie, { type EntityTable, type ObservabilitySet, type RangeSetConstructor } from 'dexie'
import * as dexieModule from 'dexie'
import type { BreakdownContent } from '#shared/schemas/breakdown'
import type { LessonEvent } from '#shared/utils/lesson-events'
// crypto.randomUUID exists only in secure contexts; a tablet on a plain-http site address still needs ids.
import { newElementId as newId } from './new-id'
import { StorageFullError, isStorageFull } from './storage-full'

export interface OfflineVersion {
  id: string
  jobId: string
  organisationId: string
  number: number
  publishedAt: number | null
  content: BreakdownContent
  job: {
    title: string
    purpose: string
    hazards: Array<{ category: string, description: string }>
    ppe: string[]
    toolsAndMaterials: string[]
    workplaceArrangement: string
    workAreaName: string | null
  }
}

export interface OfflineLearner { id: string, organisationId: string, name: string, workAreaName: string | null, reference: string }

export interface OfflinePhoto { id: string, size: 'full' | 'thumb', key: string, blob: Blob }

export type LessonStage = 'prepare' | 'present' | 'tryout' | 'followup'

export interface LocalLesson {
  id: string
  organisationId: string
  coachUserId: string
  learnerId: string
  jobId: string
  versionId: string
  place: string
  startedAt: number
  updatedAt: number
  /** Where the coach was, so a reload reopens at the same stage, pass and step. */
  cursor: { stage: LessonStage, pass: string | null, index: number }
  prepare: Record<string, { done: boolean, note: string }>
  helper: string
  decision: 'ready' | 'another-pass' | null
  acknowledgement: { name: string, signature: string | null, at: number } | null
  signedOffAt: number | null
  stageSeconds: Partial<Record<LessonStage, number>>
  /**
   * A refresher after a new version: the changed step and key point ids it presents and tries out
   * (shared/utils/refresher.ts focusContent); null, or absent on lessons made before refreshers, is the whole job.
   */
  focus?: string[] | null
  /** 0 while the server has not taken the latest change. */
  synced: 0 | 1
}

export interface LocalEvent extends LessonEvent { synced: 0 | 1 }

export interface MetaRow { key: string, value: unknown }

/** A spot check recorded on this tablet (issue 6); its marks are LocalCheckEvent rows. */
export interface LocalCheck {
  id: string
  organisationId: string
  coachUserId: string
  learnerId: string
  jobId: string
  versionId: string
  lessonId: string | null
  startedAt: number
  updatedAt: number
  /** Element ids chosen to check; a key point id with ":reason" means "tells the reason". */
  elements: string[]
  note: string
  finishedAt: number | null
  /** The taper step the check was due at (index into SPOT_CHECK_INTERVAL_DAYS). */
  intervalIndex: number
  synced: 0 | 1
}

/** A mark of a spot check; same device sequence as lesson events. */
export interface LocalCheckEvent {
  id: string
  checkId: string
  elementId: string | null
  kind: 'mark' | 'undo'
  value: string | null
  clientTime: number
  deviceId: string
  seq: number
  synced: 0 | 1
}

/** What the server says is due, kept for Today and the spot check runner offline. */
export interface OfflineDueCheck {
  key: string
  organisationId: string
  learnerId: string
  jobId: string
  versionId: string
  lessonId: string | null
  dueAt: number
  intervalIndex: number
}

/** The training timetable as last pulled, for Today offline. */
export interface OfflinePlanItem { id: string, organisationId: string, learnerId: string, jobId: string, targetDate: string | null, reason: string }

/** A learner's own study cards: a published breakdown they are trained on (read-only). */
export interface OfflineStudyCard { versionId: string, userId: string, data: unknown }

export type FourfoldDb = Dexie & {
  meta: EntityTable<MetaRow, 'key'>
  versions: EntityTable<OfflineVersion, 'id'>
  learners: EntityTable<OfflineLearner, 'id'>
  photos: EntityTable<OfflinePhoto, 'key'>
  lessons: EntityTable<LocalLesson, 'id'>
  events: EntityTable<LocalEvent, 'id'>
  checks: EntityTable<LocalCheck, 'id'>
  checkEvents: EntityTable<LocalCheckEvent, 'id'>
  dueChecks: EntityTable<OfflineDueCheck, 'key'>
  planItems: EntityTable<OfflinePlanItem, 'id'>
  studyCards: EntityTable<OfflineStudyCard, 'versionId'>
}

let db: FourfoldDb | undefined
// The device id never changes once made; keeping it saves a transaction on every tap.
let knownDeviceId: string | undefined

export function localDb(): FourfoldDb {
  if (db) return db
  // Strict durability: a mark must be on disk before the screen says it is recorded.
  const instance = new Dexie('fourfold', { chromeTransactionDurability: 'strict' }) as FourfoldDb
  instance.version(1).stores({
    meta: 'key',
    versions: 'id, jobId, organisationId',
    learners: 'id, organisationId, name',
    photos: 'key, id',
    lessons: 'id, organisationId, learnerId, jobId, updatedAt, synced',
    events: 'id, lessonId, [lessonId+seq], [deviceId+seq], synced',
  })
  // Issue 6: spot checks and their marks, what is due, the plan, a learner's study cards.
  instance.version(2).stores({
    checks: 'id, organisationId, learnerId, jobId, updatedAt, synced',
    checkEvents: 'id, checkId, synced',
    dueChecks: 'key, organisationId, dueAt',
    planItems: 'id, organisationId',
    studyCards: 'versionId, userId',
  })
  db = instance
  return instance
}

/** For tests: forget the open handle so the next call opens afresh. */
export async function closeLocalDb() {
  if (db) await flushLessonTouches().catch(() => undefined)
  db?.close()
  db = undefined
  knownDeviceId = undefined
  nextSeq = undefined
}

async function meta<T>(key: string): Promise<T | undefined> {
  return (await localDb().meta.get(key))?.value as T | undefined
}

/** This tablet's id, made once and kept. */
export async function deviceId(): Promise<string> {
  if (knownDeviceId) return knownDeviceId
  const store = localDb()
  knownDeviceId = await store.transaction('rw', store.meta, async () => {
    const existing = await meta<string>('deviceId')
    if (existing) return existing
    const id = newId()
    await store.meta.put({ key: 'deviceId', value: id })
    return id
  })
  return knownDeviceId
}

export type NewEvent = Pick<LessonEvent, 'lessonId' | 'pass' | 'elementId' | 'kind' | 'value'>

/**
 * The sequence number this tab expects to give its next event, once it has read the stored one:
 * taps reserve numbers here at once, so a tap costs no read before its writes. The stored `seq`
 * (meta) stays the truth: each write checks it in its own transaction (see writeEvent).
 */
let nextSeq: number | undefined

/**
 * Appends one event with this device's next sequence number, in one strict transaction; resolves
 * only once IndexedDB has committed it. The lesson's updatedAt follows a moment later
 * (touchLesson), outside the tap's transaction. When the browser's storage quota is reached it
 * rejects with StorageFullError (utils/storage-full.ts) and keeps nothing of this event; the
 * events committed before are untouched.
 */
export async function appendEvent(input: NewEvent, now = Date.now()): Promise<LocalEvent> {
  const store = localDb()
  const device = knownDeviceId ?? await deviceId()
  if (!store.isOpen()) await store.open()
  let event: LocalEvent
  try {
    event = await writeEvent(store, input, device, now, nextSeq === undefined ? undefined : nextSeq++)
  }
  catch (error) {
    nextSeq = undefined
    if (isStorageFull(error)) throw new StorageFullError(error)
    if (!(error instanceof SequenceMoved)) throw error
    // Another tab (or a spot check's mark) took the number meanwhile: read the stored one this time.
    try {
      event = await writeEvent(store, input, device, now, undefined)
    }
    catch (again) {
      throw isStorageFull(again) ? new StorageFullError(again) : again
    }
  }
  nextSeq = Math.max(nextSeq ?? 0, event.seq + 1)
  // Observers hear of it just after the tap resolves: the screen does not wait for them.
  setTimeout(() => announceEvent(store, event), 0)
  touchLesson(input.lessonId, now)
  return event
}

class SequenceMoved extends Error {}

/**
 * One strict transaction on the IndexedDB connection Dexie opened: the device's `seq` and the
 * event, no more. Written without Dexie's layers (they cost more than the commit itself on a
 * tablet) and announced to Dexie afterwards (announceEvent). With a reserved number the stored seq
 * is read in the same transaction, ahead of the writes but not waited for: if it is not the number
 * just before ours, the transaction is aborted from that read's own callback, before anything can
 * commit, and appendEvent tries again with the stored number. Without one, the writes are issued
 * from the read's callback. Either way no two events of a device share a number.
 */
function writeEvent(store: FourfoldDb, input: NewEvent, device: string, now: number, reserved: number | undefined): Promise<LocalEvent> {
  return new Promise((resolve, reject) => {
    const tx = store.backendDB().transaction(['meta', 'events'], 'readwrite', { durability: 'strict' })
    const metaStore = tx.objectStore('meta')
    let event: LocalEvent | undefined
    let moved = false
    let thrown: unknown
    const write = (seq: number) => {
      event = { ...input, id: newId(), clientTime: now, deviceId: device, seq, synced: 0 }
      try {
        metaStore.put({ key: 'seq', value: seq } satisfies MetaRow)
        tx.objectStore('events').add(event)
      }
      catch (error) {
        // A write refused on the spot: the seq must not commit without its event.
        thrown = error
        tx.abort()
      }
    }
    const stored = metaStore.get('seq')
    const storedSeq = () => ((stored.result as MetaRow | undefined)?.value as number | undefined) ?? 0
    if (reserved === undefined) {
      stored.onsuccess = () => write(storedSeq() + 1)
    }
    else {
      stored.onsuccess = () => {
        if (storedSeq() === reserved - 1) return
        moved = true
        tx.abort()
      }
      write(reserved)
    }
    tx.oncomplete = () => resolve(event!)
    tx.onabort = () => reject(moved ? new SequenceMoved() : (thrown ?? tx.error ?? new DOMException('The tablet\'s storage gave up on the write.', 'AbortError')))
  })
}

/** Tells Dexie's observers (liveQuery, the outbox counts, other tabs) what the tap wrote, as a write through Dexie would. */
function announceEvent(store: FourfoldDb, e: LocalEvent) {
  // Dexie's own RangeSet, looked up at run time: the browser's ES module build exports it by name
  // only, the server's CommonJS build has it only on the default export (and a plain named import
  // or property read would be bundled into an import the server cannot link).
  const RangeSet = (Reflect.get(dexieModule, 'RangeSet') ?? Reflect.get(Dexie, 'RangeSet')) as RangeSetConstructor
  const events = `idb://${store.name}/events/`
  const meta = `idb://${store.name}/meta/`
  const parts: ObservabilitySet = {
    [events]: new RangeSet(e.id),
    [`${events}:dels`]: new RangeSet(e.id),
    [`${events}lessonId`]: new RangeSet(e.lessonId),
    [`${events}[lessonId+seq]`]: new RangeSet([e.lessonId, e.seq]),
    [`${events}[deviceId+seq]`]: new RangeSet([e.deviceId, e.seq]),
    [`${events}synced`]: new RangeSet(e.synced),
    [meta]: new RangeSet('seq'),
    [`${meta}:dels`]: new RangeSet('seq'),
  }
  Dexie.on.storagemutated.fire(parts)
}

/** Lessons whose updatedAt is still to be written, with the latest tap's time. */
const lessonTouches = new Map<string, number>()
let touchTimer: ReturnType<typeof setTimeout> | undefined
/** How long taps are gathered before one write of the lessons' updatedAt. */
const TOUCH_DELAY_MS = 1000

/**
 * A tap moves its lesson's updatedAt (Today lists the latest first). It is written once for a
 * run of taps, a second after the first, when the page is hidden, and before the lesson helpers
 * below read lessons, so a tap's own transaction holds only what a mark needs.
 */
function touchLesson(lessonId: string, at: number) {
  lessonTouches.set(lessonId, Math.max(lessonTouches.get(lessonId) ?? 0, at))
  if (touchTimer !== undefined) return
  touchTimer = setTimeout(() => void flushLessonTouches().catch(() => undefined), TOUCH_DELAY_MS)
  if (typeof document !== 'undefined') document.addEventListener('visibilitychange', flushWhenHidden, { once: true })
}

function flushWhenHidden() {
  if (document.visibilityState === 'hidden') void flushLessonTouches().catch(() => undefined)
  else if (touchTimer !== undefined) document.addEventListener('visibilitychange', flushWhenHidden, { once: true })
}

/** Writes the updatedAt of lessons tapped since the last write (never moving one backwards). */
export async function flushLessonTouches(): Promise<void> {
  clearTimeout(touchTimer)
  touchTimer = undefined
  if (!lessonTouches.size) return
  const touches = [...lessonTouches]
  lessonTouches.clear()
  const store = localDb()
  await store.transaction('rw', store.lessons, async () => {
    for (const [id, at] of touches) await store.lessons.where(':id').equals(id).and(l => l.updatedAt < at).modify({ updatedAt: at })
  })
}

export async function lessonEvents(lessonId: string): Promise<LocalEvent[]> {
  return localDb().events.where('lessonId').equals(lessonId).toArray()
}

export async function saveLesson(lesson: LocalLesson): Promise<void> {
  await localDb().lessons.put(lesson)
}

export async function updateLesson(id: string, changes: Partial<Omit<LocalLesson, 'id'>>, now = Date.now()): Promise<void> {
  await localDb().lessons.update(id, { ...changes, updatedAt: now, synced: 0 })
}

export async function getLesson(id: string): Promise<LocalLesson | undefined> {
  await flushLessonTouches().catch(() => undefined)
  return localDb().lessons.get(id)
}

export async function lessonsOf(organisationId: string): Promise<LocalLesson[]> {
  await flushLessonTouches().catch(() => undefined)
  return (await localDb().lessons.where('organisationId').equals(organisationId).toArray()).sort((a, b) => b.updatedAt - a.updatedAt)
}

export async function unsyncedEvents(limit = 5000): Promise<LocalEvent[]> {
  return localDb().events.where('synced').equals(0).limit(limit).toArray()
}

export async function markEventsSynced(ids: readonly string[]): Promise<void> {
  const store = localDb()
  await store.transaction('rw', store.events, async () => {
    await store.events.where('id').anyOf([...ids]).modify({ synced: 1 })
  })
}

/** Replaces the organisation's published breakdowns and roster with what the server sent. */
export async function storeReferenceData(organisationId: string, data: { versions: OfflineVersion[], learners: OfflineLearner[] }): Promise<void> {
  const store = localDb()
  await store.transaction('rw', [store.versions, store.learners], async () => {
    await store.versions.where('organisationId').equals(organisationId).delete()
    await store.learners.where('organisationId').equals(organisationId).delete()
    await store.versions.bulkPut(data.versions)
    await store.learners.bulkPut(data.learners)
  })
}

export async function offlineVersions(organisationId: string): Promise<OfflineVersion[]> {
  return localDb().versions.where('organisationId').equals(organisationId).toArray()
}

export async function offlineLearners(organisationId: string): Promise<OfflineLearner[]> {
  return localDb().learners.where('organisationId').equals(organisationId).sortBy('name')
}

export async function storePhoto(id: string, size: 'full' | 'thumb', blob: Blob): Promise<void> {
  await localDb().photos.put({ id, size, key: `${id}:${size}`, blob })
}

export async function offlinePhoto(id: string, size: 'full' | 'thumb'): Promise<Blob | undefined> {
  return (await localDb().photos.get(`${id}:${size}`))?.blob
}
