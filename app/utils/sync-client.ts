// The tablet's side of sync (DESIGN.md §7): what is waiting in the outbox, cut into pushes that
// stay under the server's limits, and what the answer means for each item on the device.
// Accepted items are marked synced; rejected ones keep their reason and stay until the coach
// resolves them; the fresh scores the server computed are kept beside the lesson. Spot checks and
// their marks travel in the same pushes (a check mark names checkId instead of lessonId).
import { SYNC_LIMITS } from '#shared/utils/sync-limits'
import { byCodeUnits } from '#shared/utils/code-order'
import { localDb, type LocalCheck, type LocalCheckEvent, type LocalEvent, type LocalLesson } from './localdb'
import { observedLessonIds } from './observed-lessons'
import type { CheckServerResult, SyncedCheck, SyncedCheckEvent } from './local-checks'

export interface ServerScore { t1: number | null, t2: number | null, t3: number | null, t4: number | null, order: number | null, recall: number | null, readiness: 'ready' | 'another-pass' }

/** What the device keeps about an item the server refused. */
export interface Rejection { reason: string, at: number }

export type SyncedLesson = LocalLesson & { rejection?: Rejection | null, serverScore?: ServerScore | null, pushedUpdatedAt?: number }
export type SyncedEvent = LocalEvent & { rejection?: Rejection | null }

export type PushedEvent = Omit<LocalEvent, 'synced'> | Omit<LocalCheckEvent, 'synced'>

export interface Push {
  deviceId: string
  lessons: Array<Record<string, unknown>>
  events: PushedEvent[]
  checks: Array<Record<string, unknown>>
}

/** Events per push: well under the server's 20,000, so one push stays small on a slow line. */
export const EVENTS_PER_PUSH = 4000

export function lessonForPush(l: LocalLesson) {
  return {
    id: l.id, coachUserId: l.coachUserId, learnerId: l.learnerId, jobId: l.jobId, versionId: l.versionId, place: l.place,
    startedAt: l.startedAt, updatedAt: l.updatedAt, prepare: l.prepare, helper: l.helper, decision: l.decision,
    acknowledgement: l.acknowledgement, signedOffAt: l.signedOffAt, stageSeconds: l.stageSeconds,
    // A refresher's focus (null: the whole job); lessons made before refreshers have none.
    focus: (l as LocalLesson & { focus?: string[] | null }).focus ?? null,
  }
}

export function checkForPush(c: LocalCheck) {
  return {
    id: c.id, coachUserId: c.coachUserId, learnerId: c.learnerId, jobId: c.jobId, versionId: c.versionId, lessonId: c.lessonId,
    startedAt: c.startedAt, updatedAt: c.updatedAt, elements: c.elements, note: c.note, finishedAt: c.finishedAt, intervalIndex: c.intervalIndex,
  }
}

/** The event as the server takes it: without what only this device keeps about it. */
function eventForPush<E extends LocalEvent | LocalCheckEvent>(e: E): Omit<E, 'synced'> {
  const { synced: _synced, rejection: _rejection, ...event } = e as E & { rejection?: unknown }
  return event as Omit<E, 'synced'>
}

/**
 * Cuts the waiting lessons, checks and events into pushes: each push carries the lessons and checks
 * its events belong to (the server needs them first), and a check the lesson it follows when that
 * lesson is waiting too; at most EVENTS_PER_PUSH events and well under the byte limit.
 */
export function planPushes(deviceId: string, lessons: readonly LocalLesson[], events: readonly LocalEvent[], perPush = EVENTS_PER_PUSH, checks: readonly LocalCheck[] = [], checkEvents: readonly LocalCheckEvent[] = []): Push[] {
  const byId = new Map(lessons.map(l => [l.id, l]))
  const checkById = new Map(checks.map(c => [c.id, c]))
  const pushes: Push[] = []
  let current: Push | null = null
  let bytes = 0
  const start = () => {
    current = { deviceId, lessons: [], events: [], checks: [] }
    pushes.push(current)
    bytes = 0
    return current
  }
  const sorted = [...events].sort((a, b) => byCodeUnits(a.lessonId, b.lessonId) || a.seq - b.seq)
  for (const e of sorted) {
    const size = JSON.stringify(eventForPush(e)).length + 1
    let push: Push = current ?? start()
    if (push.events.length >= perPush || bytes + size > SYNC_LIMITS.bodyBytes / 2) push = start()
    if (!push.lessons.some(l => l.id === e.lessonId)) {
      const lesson = byId.get(e.lessonId)
      if (lesson) {
        push.lessons.push(lessonForPush(lesson))
        bytes += JSON.stringify(push.lessons.at(-1)).length
      }
    }
    push.events.push(eventForPush(e))
    bytes += size
  }
  // Lessons with changed fields but no waiting events still need sending.
  const carried = new Set(pushes.flatMap(p => p.lessons.map(l => l.id as string)))
  const rest = lessons.filter(l => !carried.has(l.id))
  for (const l of rest) {
    const last = pushes.at(-1)
    const push: Push = last && last.lessons.length < 400 ? last : start()
    push.lessons.push(lessonForPush(l))
  }

  // Checks after lessons, so a check that follows a lesson waiting here finds it on the server.
  const carryCheck = (push: Push, check: LocalCheck) => {
    if (push.checks.some(c => c.id === check.id)) return
    const lesson = check.lessonId ? byId.get(check.lessonId) : undefined
    if (lesson && !push.lessons.some(l => l.id === lesson.id)) push.lessons.push(lessonForPush(lesson))
    push.checks.push(checkForPush(check))
    bytes += JSON.stringify(push.checks.at(-1)).length
  }
  const sortedChecks = [...checkEvents].sort((a, b) => byCodeUnits(a.checkId, b.checkId) || a.seq - b.seq)
  for (const e of sortedChecks) {
    const size = JSON.stringify(eventForPush(e)).length + 1
    let push: Push = current ?? start()
    if (push.events.length >= perPush || push.checks.length >= 400 || bytes + size > SYNC_LIMITS.bodyBytes / 2) push = start()
    const check = checkById.get(e.checkId)
    if (check) carryCheck(push, check)
    push.events.push(eventForPush(e))
    bytes += size
  }
  const carriedChecks = new Set(pushes.flatMap(p => p.checks.map(c => c.id as string)))
  for (const c of checks.filter(c => !carriedChecks.has(c.id))) {
    const last = pushes.at(-1)
    const push: Push = last && last.checks.length < 400 ? last : start()
    carryCheck(push, c)
  }
  return pushes
}

/** Everything waiting on this device for one organisation (rejected items wait for the coach). */
export async function outbox(organisationId: string) {
  const db = localDb()
  const lessons = (await db.lessons.where('organisationId').equals(organisationId).toArray()) as SyncedLesson[]
  // A second coach's marks of a lesson recorded on another tablet go out too (utils/observed-lessons.ts).
  const ids = new Set([...lessons.map(l => l.id), ...await observedLessonIds(organisationId)])
  const events = ((await db.events.where('synced').equals(0).toArray()) as SyncedEvent[]).filter(e => ids.has(e.lessonId))
  const checks = ((await db.checks.where('organisationId').equals(organisationId).toArray()) as SyncedCheck[]).filter(c => !c.fromServer)
  const checkIds = new Set(checks.map(c => c.id))
  const checkEvents = ((await db.checkEvents.where('synced').equals(0).toArray()) as SyncedCheckEvent[]).filter(e => checkIds.has(e.checkId))
  return {
    lessons: lessons.filter(l => l.synced === 0 && !l.rejection),
    events: events.filter(e => !e.rejection),
    rejectedLessons: lessons.filter(l => l.rejection),
    rejectedEvents: events.filter(e => e.rejection),
    checks: checks.filter(c => c.synced === 0 && !c.rejection),
    checkEvents: checkEvents.filter(e => !e.rejection),
    rejectedChecks: checks.filter(c => c.rejection),
    rejectedCheckEvents: checkEvents.filter(e => e.rejection),
  }
}

export interface PushAnswer { accepted: string[], rejected: Array<{ id: string, reason: string }>, scores: Record<string, ServerScore>, checks?: Record<string, CheckServerResult>, cursor: number }

/**
 * The server's scores of lessons a pull brought, beside the lessons on this tablet; a lesson that is
 * not on it is skipped (the pull lists the organisation's). One request for the whole page, not one
 * per lesson: a first pull brings every lesson while Today is opening.
 */
export async function storePulledScores(lessons: ReadonlyArray<{ id: string, score: ServerScore | null }>): Promise<void> {
  const scores = lessons.flatMap(l => l.score ? [{ key: l.id, changes: { serverScore: l.score } as Partial<SyncedLesson> }] : [])
  if (scores.length) await localDb().lessons.bulkUpdate(scores)
}

/** Applies the server's answer to the device, in one transaction. */
export async function applyPushAnswer(push: Push, answer: PushAnswer, now = Date.now()) {
  const db = localDb()
  const accepted = new Set(answer.accepted)
  const rejected = new Map(answer.rejected.map(r => [r.id, r.reason]))
  await db.transaction('rw', [db.lessons, db.events, db.checks, db.checkEvents], async () => {
    for (const e of push.events) {
      const changes = accepted.has(e.id) ? { synced: 1 as const, rejection: null } : rejected.has(e.id) ? { rejection: { reason: rejected.get(e.id)!, at: now } } : null
      if (!changes) continue
      if ('checkId' in e) await db.checkEvents.update(e.id, changes as Partial<SyncedCheckEvent>)
      else await db.events.update(e.id, changes as Partial<SyncedEvent>)
    }
    for (const c of push.checks) {
      const id = c.id as string
      const stored = await db.checks.get(id)
      if (!stored) continue
      const changes: Partial<SyncedCheck> = {}
      if (accepted.has(id) && stored.updatedAt === c.updatedAt) Object.assign(changes, { synced: 1, rejection: null })
      if (rejected.has(id)) changes.rejection = { reason: rejected.get(id)!, at: now }
      if (answer.checks?.[id]) changes.serverResult = answer.checks[id]
      if (Object.keys(changes).length) await db.checks.update(id, changes)
    }
    for (const l of push.lessons) {
      const id = l.id as string
      const stored = await db.lessons.get(id) as SyncedLesson | undefined
      if (!stored) continue
      const changes: Partial<SyncedLesson> = {}
      // Only the copy that was sent is settled; an edit made while the push was out waits for the next.
      if (accepted.has(id) && stored.updatedAt === l.updatedAt) Object.assign(changes, { synced: 1, rejection: null })
      if (rejected.has(id)) changes.rejection = { reason: rejected.get(id)!, at: now }
      if (answer.scores[id]) changes.serverScore = answer.scores[id]
      if (Object.keys(changes).length) await db.lessons.update(id, changes)
    }
    for (const [id, score] of Object.entries(answer.scores)) {
      if (!push.lessons.some(l => l.id === id)) await db.lessons.update(id, { serverScore: score } as Partial<SyncedLesson>)
    }
  })
}

/** The coach's choice for a refused item: send it again (after fixing the cause) or take it off this tablet. */
export async function resolveRejection(kind: 'lesson' | 'event' | 'check' | 'check-event', id: string, action: 'retry' | 'discard') {
  const db = localDb()
  if (kind === 'check-event') {
    if (action === 'retry') await db.checkEvents.update(id, { rejection: null } as Partial<SyncedCheckEvent>)
    else await db.checkEvents.delete(id)
    return
  }
  if (kind === 'check') {
    if (action === 'retry') await db.checks.update(id, { rejection: null } as Partial<SyncedCheck>)
    else {
      await db.transaction('rw', [db.checks, db.checkEvents], async () => {
        await db.checkEvents.where('checkId').equals(id).delete()
        await db.checks.delete(id)
      })
    }
    return
  }
  if (kind === 'event') {
    if (action === 'retry') await db.events.update(id, { rejection: null } as Partial<SyncedEvent>)
    else await db.events.delete(id)
    return
  }
  if (action === 'retry') await db.lessons.update(id, { rejection: null } as Partial<SyncedLesson>)
  else {
    await db.transaction('rw', [db.lessons, db.events], async () => {
      await db.events.where('lessonId').equals(id).delete()
      await db.lessons.delete(id)
    })
  }
}
