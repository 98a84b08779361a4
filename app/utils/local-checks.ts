// Spot checks on the tablet (IndexedDB through Dexie, the same store and the same strict
// durability as lessons): the check rows, their marks, and what the last pull said is due and
// planned. A mark is appended with this device's next sequence number (shared with lesson
// events) and the promise resolves only once IndexedDB has committed it (DESIGN.md §7).
import type { CheckEvent } from '#shared/utils/check-state'
import { newElementId as newId } from './new-id'
import { deviceId, localDb, type LocalCheck, type LocalCheckEvent, type OfflineDueCheck, type OfflinePlanItem } from './localdb'

/** What the server computed for a finished check. */
export interface CheckServerResult { outcome: 'clean' | 'stay' | 'reteach' | null, nextIntervalIndex: number | null, nextDueAt: number | null }

/** A check as the device keeps it: its sync state beside the row. */
export type SyncedCheck = LocalCheck & {
  rejection?: { reason: string, at: number } | null
  serverResult?: CheckServerResult | null
  /** Pulled from the server (recorded on another tablet), never sent from here. */
  fromServer?: boolean
}
export type SyncedCheckEvent = LocalCheckEvent & { rejection?: { reason: string, at: number } | null }

export type NewCheckEvent = Pick<LocalCheckEvent, 'checkId' | 'elementId' | 'kind' | 'value'>

/** Appends one mark or undo; resolves once IndexedDB has committed it with the check's updatedAt. */
export async function appendCheckEvent(input: NewCheckEvent, now = Date.now()): Promise<LocalCheckEvent> {
  const store = localDb()
  const device = await deviceId()
  return store.transaction('rw', [store.meta, store.checkEvents, store.checks], async () => {
    const seq = (((await store.meta.get('seq'))?.value as number | undefined) ?? 0) + 1
    const event: LocalCheckEvent = { ...input, id: newId(), clientTime: now, deviceId: device, seq, synced: 0 }
    await Promise.all([
      store.meta.put({ key: 'seq', value: seq }),
      store.checkEvents.add(event),
      store.checks.update(input.checkId, { updatedAt: now }),
    ])
    return event
  })
}

export async function saveCheck(check: LocalCheck): Promise<void> {
  await localDb().checks.put(check)
}

export async function updateCheck(id: string, changes: Partial<Omit<LocalCheck, 'id'>>, now = Date.now()): Promise<void> {
  await localDb().checks.update(id, { ...changes, updatedAt: now, synced: 0 })
}

export async function getCheck(id: string): Promise<SyncedCheck | undefined> {
  return localDb().checks.get(id)
}

export async function eventsOfCheck(checkId: string): Promise<LocalCheckEvent[]> {
  return localDb().checkEvents.where('checkId').equals(checkId).toArray()
}

export async function checksOf(organisationId: string): Promise<SyncedCheck[]> {
  return (await localDb().checks.where('organisationId').equals(organisationId).toArray()).sort((a, b) => b.updatedAt - a.updatedAt)
}

export async function dueChecksOf(organisationId: string): Promise<OfflineDueCheck[]> {
  return localDb().dueChecks.where('organisationId').equals(organisationId).sortBy('dueAt')
}

export async function planItemsOf(organisationId: string): Promise<OfflinePlanItem[]> {
  return localDb().planItems.where('organisationId').equals(organisationId).toArray()
}

/** A stored mark in the shape the shared replay reads. */
export function asCheckEvent(e: LocalCheckEvent): CheckEvent {
  return { id: e.id, checkId: e.checkId, elementId: e.elementId, kind: e.kind, value: e.value, clientTime: e.clientTime, deviceId: e.deviceId, seq: e.seq }
}

/** One pulled spot check, as GET /api/sync sends it. */
export interface PulledCheck {
  id: string
  coachUserId: string | null
  learnerId: string
  jobId: string
  versionId: string
  lessonId: string | null
  startedAt: number
  elements: string[]
  note: string
  finishedAt: number | null
  intervalIndex: number
  updatedAt: number
  result: { outcome: 'clean' | 'stay' | 'reteach', nextIntervalIndex: number, nextDueAt: number } | null
}

/**
 * Writes what a pull brought about checks and the plan: the server's outcome beside a check made
 * here, other tablets' checks as read-only rows, plan items (all of them on a full pull), and the
 * due checks (always the whole list: they are derived on the server).
 */
export async function storePulledChecks(organisationId: string, pulled: { full: boolean, checks: PulledCheck[], planItems: OfflinePlanItem[], removedPlanItems: string[], dueChecks: OfflineDueCheck[] | undefined }, now = Date.now()) {
  const db = localDb()
  await db.transaction('rw', [db.checks, db.planItems, db.dueChecks, db.meta], async () => {
    // Read and written in bulk, not one request per check: a first pull brings the organisation's
    // whole history while Today is opening, and each request costs the page's main thread.
    const stored = await db.checks.bulkGet(pulled.checks.map(c => c.id)) as Array<SyncedCheck | undefined>
    const results: Array<{ key: string, changes: Partial<SyncedCheck> }> = []
    const rows: SyncedCheck[] = []
    pulled.checks.forEach((c, i) => {
      const mine = stored[i]
      if (mine && !mine.fromServer) {
        results.push({ key: c.id, changes: { serverResult: c.result } })
        return
      }
      rows.push({
        id: c.id, organisationId, coachUserId: c.coachUserId ?? '', learnerId: c.learnerId, jobId: c.jobId, versionId: c.versionId, lessonId: c.lessonId,
        startedAt: c.startedAt, updatedAt: c.updatedAt, elements: c.elements, note: c.note, finishedAt: c.finishedAt, intervalIndex: c.intervalIndex,
        synced: 1, fromServer: true, serverResult: c.result,
      })
    })
    if (results.length) await db.checks.bulkUpdate(results)
    if (rows.length) await db.checks.bulkPut(rows)
    if (pulled.full) await db.planItems.where('organisationId').equals(organisationId).delete()
    if (pulled.removedPlanItems.length) await db.planItems.bulkDelete(pulled.removedPlanItems)
    await db.planItems.bulkPut(pulled.planItems.map(p => ({ id: p.id, organisationId, learnerId: p.learnerId, jobId: p.jobId, targetDate: p.targetDate, reason: p.reason })))
    if (pulled.dueChecks) {
      await db.dueChecks.where('organisationId').equals(organisationId).delete()
      await db.dueChecks.bulkPut(pulled.dueChecks.map(d => ({ key: d.key, organisationId, learnerId: d.learnerId, jobId: d.jobId, versionId: d.versionId, lessonId: d.lessonId, dueAt: d.dueAt, intervalIndex: d.intervalIndex })))
      await db.meta.put({ key: `dueChecksAt:${organisationId}`, value: now })
    }
  })
}

/** When the due list was last pulled (a check started after it is not in it yet). */
export async function dueChecksPulledAt(organisationId: string): Promise<number | null> {
  return ((await localDb().meta.get(`dueChecksAt:${organisationId}`))?.value as number | undefined) ?? null
}
