// The tablet's side of sync (DESIGN.md §7): what is waiting in the outbox, cut into pushes that
// stay under the server's limits, and what the answer means for each item on the device.
// Accepted items are marked synced; rejected ones keep their reason and stay until the coach
// resolves them; the fresh scores the server computed are kept beside the lesson.
import { SYNC_LIMITS } from '#shared/utils/sync-limits'
import { localDb, type LocalEvent, type LocalLesson } from './localdb'

export interface ServerScore { t1: number | null, t2: number | null, t3: number | null, t4: number | null, order: number | null, recall: number | null, readiness: 'ready' | 'another-pass' }

/** What the device keeps about an item the server refused. */
export interface Rejection { reason: string, at: number }

export type SyncedLesson = LocalLesson & { rejection?: Rejection | null, serverScore?: ServerScore | null, pushedUpdatedAt?: number }
export type SyncedEvent = LocalEvent & { rejection?: Rejection | null }

export interface Push {
  deviceId: string
  lessons: Array<Record<string, unknown>>
  events: Array<Omit<LocalEvent, 'synced'>>
  checks: never[]
}

/** Events per push: well under the server's 20,000, so one push stays small on a slow line. */
export const EVENTS_PER_PUSH = 4000

export function lessonForPush(l: LocalLesson) {
  return {
    id: l.id, coachUserId: l.coachUserId, learnerId: l.learnerId, jobId: l.jobId, versionId: l.versionId, place: l.place,
    startedAt: l.startedAt, updatedAt: l.updatedAt, prepare: l.prepare, helper: l.helper, decision: l.decision,
    acknowledgement: l.acknowledgement, signedOffAt: l.signedOffAt, stageSeconds: l.stageSeconds,
  }
}

/** The event as the server takes it: without what only this device keeps about it. */
function eventForPush(e: LocalEvent): Omit<LocalEvent, 'synced'> {
  const { synced: _synced, rejection: _rejection, ...event } = e as SyncedEvent
  return event
}

/**
 * Cuts the waiting lessons and events into pushes: each push carries the lessons its events belong
 * to (the server needs the lesson first), at most EVENTS_PER_PUSH events and well under the byte limit.
 */
export function planPushes(deviceId: string, lessons: readonly LocalLesson[], events: readonly LocalEvent[], perPush = EVENTS_PER_PUSH): Push[] {
  const byId = new Map(lessons.map(l => [l.id, l]))
  const pushes: Push[] = []
  let current: Push | null = null
  let bytes = 0
  const start = () => {
    current = { deviceId, lessons: [], events: [], checks: [] }
    pushes.push(current)
    bytes = 0
    return current
  }
  const sorted = [...events].sort((a, b) => a.lessonId.localeCompare(b.lessonId) || a.seq - b.seq)
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
  return pushes
}

/** Everything waiting on this device for one organisation (rejected items wait for the coach). */
export async function outbox(organisationId: string) {
  const db = localDb()
  const lessons = (await db.lessons.where('organisationId').equals(organisationId).toArray()) as SyncedLesson[]
  const ids = new Set(lessons.map(l => l.id))
  const events = ((await db.events.where('synced').equals(0).toArray()) as SyncedEvent[]).filter(e => ids.has(e.lessonId))
  return {
    lessons: lessons.filter(l => l.synced === 0 && !l.rejection),
    events: events.filter(e => !e.rejection),
    rejectedLessons: lessons.filter(l => l.rejection),
    rejectedEvents: events.filter(e => e.rejection),
  }
}

export interface PushAnswer { accepted: string[], rejected: Array<{ id: string, reason: string }>, scores: Record<string, ServerScore>, cursor: number }

/** Applies the server's answer to the device, in one transaction. */
export async function applyPushAnswer(push: Push, answer: PushAnswer, now = Date.now()) {
  const db = localDb()
  const accepted = new Set(answer.accepted)
  const rejected = new Map(answer.rejected.map(r => [r.id, r.reason]))
  await db.transaction('rw', [db.lessons, db.events], async () => {
    for (const e of push.events) {
      if (accepted.has(e.id)) await db.events.update(e.id, { synced: 1, rejection: null } as Partial<SyncedEvent>)
      else if (rejected.has(e.id)) await db.events.update(e.id, { rejection: { reason: rejected.get(e.id)!, at: now } } as Partial<SyncedEvent>)
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
export async function resolveRejection(kind: 'lesson' | 'event', id: string, action: 'retry' | 'discard') {
  const db = localDb()
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
