// The spot-check half of a sync push (DESIGN.md §7, issue 6 item 2), merged by the same rules as
// lessons and their marks (server/utils/sync-merge.ts):
// - a check's fields merge last-writer-wins on (finished first, client time, device id, content);
//   a finished check is closed: an open copy never replaces it, and marks made after the finish
//   are kept (append-only) but do not count;
// - its marks are events that name `checkId` instead of `lessonId`, stored in check_events by id:
//   the same id with the same content is a no-op, with other content a conflict (rejected);
// - when a finished check is written or gets marks, its outcome, next taper step and next due
//   date are computed with shared/utils (check-state.ts) and stored; change_feed gets 'check'.
// Checks are few and small beside lesson marks, so this path favours plain code over speed.
import type { Client, InStatement, Transaction } from '@libsql/client'
import { syncCheckEventSchema, syncCheckSchema, type SyncCheck, type SyncCheckEvent } from '../../shared/schemas/sync'
import type { BreakdownContent } from '../../shared/schemas/breakdown'
import { elementsById } from '../../shared/utils/check-elements'
import { checkResult, type CheckEvent } from '../../shared/utils/check-state'
import { VALIDATE_CHUNK, clockIsNewer, firstIssue, inChunks, pinnedToOrganisation, pushedItemId, selectWhereIn, yieldToLoop, type Rejection, type SyncClock } from './sync-batch'
/** What the server computed for a finished check. */
export interface CheckServerResult { outcome: 'clean' | 'stay' | 'reteach' | null, nextIntervalIndex: number | null, nextDueAt: number | null }

/** Whether a pushed event is a spot check's mark (it names checkId) rather than a lesson's. */
export function isCheckEventItem(item: unknown): boolean {
  return typeof item === 'object' && item !== null && 'checkId' in item
}

/** Each check and check mark on its own: shape, sender, duplicates inside the push. */
export async function validateCheckItems(deviceId: string, checkItems: readonly unknown[], eventItems: readonly unknown[], rejected: Rejection[]) {
  let validated = 0
  const checks: SyncCheck[] = []
  for (const item of checkItems) {
    if (++validated % VALIDATE_CHUNK === 0) await yieldToLoop()
    const r = syncCheckSchema.safeParse(item)
    if (r.success) checks.push(r.data)
    else rejected.push({ id: pushedItemId(item), reason: `Spot check not valid — ${firstIssue(r.error)}` })
  }
  const events: SyncCheckEvent[] = []
  const seen = new Map<string, string>()
  for (const item of eventItems) {
    if (++validated % VALIDATE_CHUNK === 0) await yieldToLoop()
    if ((item as { lessonId?: unknown }).lessonId !== undefined) {
      rejected.push({ id: pushedItemId(item), reason: 'A mark names either a lesson or a spot check, not both.' })
      continue
    }
    const r = syncCheckEventSchema.safeParse(item)
    if (!r.success) {
      rejected.push({ id: pushedItemId(item), reason: `Spot check mark not valid — ${firstIssue(r.error)}` })
      continue
    }
    const e = r.data
    if (e.deviceId !== deviceId) {
      rejected.push({ id: e.id, reason: 'This mark was recorded on another tablet; that tablet must send it.' })
      continue
    }
    const text = JSON.stringify(e)
    const twin = seen.get(e.id)
    if (twin !== undefined) {
      if (twin !== text) rejected.push({ id: e.id, reason: 'The same mark id appears twice in this push with different content.' })
      continue
    }
    seen.set(e.id, text)
    events.push(e)
  }
  return { checks, events }
}

/**
 * Every id a check names must belong to this organisation, its version must be a published (or
 * retired) version of its job, and every element must be a step, key point or reason of that
 * version. Returns the checks that pass, with the contents of their versions.
 */
export async function checksOfOrganisation(client: Client, organisationId: string, checks: SyncCheck[], rejected: Rejection[]) {
  const contents = new Map<string, BreakdownContent>()
  if (!checks.length) return { checks, contents }
  const pinned = await pinnedToOrganisation(client, organisationId, checks, 'A spot check must use a published breakdown, not a draft.', rejected, true)
  const elementsOfVersion = new Map<string, Set<string>>()
  const valid = pinned.valid.filter((c) => {
    if (!contents.has(c.versionId)) {
      const content = JSON.parse(String(pinned.versions.get(c.versionId)!.content)) as BreakdownContent
      contents.set(c.versionId, content)
      elementsOfVersion.set(c.versionId, new Set(elementsById(content).keys()))
    }
    const known = elementsOfVersion.get(c.versionId)!
    const unknown = c.elements.filter(id => !known.has(id))
    if (unknown.length) rejected.push({ id: c.id, reason: `${unknown.length === 1 ? 'One element is' : `${unknown.length} elements are`} not in this breakdown version (${unknown[0]}); choose the elements again from the breakdown.` })
    return !unknown.length
  })
  return { checks: valid, contents }
}

function checkFields(c: { coachUserId: string | null, startedAt: number, elements: readonly string[], note: string, finishedAt: number | null, intervalIndex: number }) {
  return JSON.stringify([c.coachUserId, c.startedAt, c.elements, c.note, c.finishedAt, c.intervalIndex])
}

function storedCheckFields(row: Record<string, unknown>) {
  return checkFields({ coachUserId: row.coach_user_id as string | null, startedAt: Number(row.started_at), elements: JSON.parse(String(row.elements ?? '[]')) as string[], note: row.note as string, finishedAt: row.finished_at == null ? null : Number(row.finished_at), intervalIndex: Number(row.interval_index) })
}

/** A check's clock (see SyncClock): finished counts as closed. */
function checkClock(finishedAt: number | null, updatedAt: number, deviceId: string, fields: string): SyncClock {
  return [finishedAt === null ? 0 : 1, updatedAt, deviceId, fields]
}

function sameEvent(row: Record<string, unknown>, e: SyncCheckEvent) {
  return row.check_id === e.checkId && (row.element_id ?? null) === e.elementId && row.kind === e.kind && (row.value ?? null) === e.value
    && Number(row.client_time) === e.clientTime && row.device_id === e.deviceId && Number(row.seq) === e.seq
}

function rowToEvent(row: Record<string, unknown>): CheckEvent {
  return { id: row.id as string, checkId: row.check_id as string, elementId: (row.element_id as string | null) ?? null, kind: row.kind as CheckEvent['kind'], value: (row.value as string | null) ?? null, clientTime: Number(row.client_time), deviceId: row.device_id as string, seq: Number(row.seq) }
}

/**
 * Writes the checks and check marks of one push inside the push's write transaction (lessons are
 * already merged, so a check may follow a lesson sent in the same push).
 */
export async function writeChecks(tx: Transaction, organisationId: string, deviceId: string, checks: SyncCheck[], contents: Map<string, BreakdownContent>, events: SyncCheckEvent[], now: number, accepted: string[], rejected: Rejection[]) {
  const touched = new Set<string>()
  let checksWritten = 0
  let eventsWritten = 0
  if (!checks.length && !events.length) return { results: {} as Record<string, CheckServerResult>, written: { checks: 0, checkEvents: 0 } }

  // The newest copy of each check in this push.
  const newest = new Map<string, SyncCheck>()
  for (const c of checks) {
    const seen = newest.get(c.id)
    if (!seen || clockIsNewer(checkClock(c.finishedAt, c.updatedAt, deviceId, checkFields(c)), checkClock(seen.finishedAt, seen.updatedAt, deviceId, checkFields(seen)))) newest.set(c.id, c)
  }
  // A check that follows a lesson names one of this organisation's lessons of the same learner and job.
  const lessons = new Map((await selectWhereIn(tx, 'select id, learner_id, job_id from lessons where organisation_id = ? and id in', [...newest.values()].flatMap(c => (c.lessonId ? [c.lessonId] : [])), '', [organisationId])).map(r => [r.id as string, r]))
  const existing = new Map((await selectWhereIn(tx, 'select * from spot_checks where id in', [...newest.keys()])).map(r => [r.id as string, r]))
  const statements: InStatement[] = []
  for (const c of newest.values()) {
    if (c.lessonId) {
      const lesson = lessons.get(c.lessonId)
      if (!lesson) {
        rejected.push({ id: c.id, reason: 'The lesson this check follows is not on the server; send that lesson first (or keep the check and try again after it is sent).' })
        continue
      }
      if (lesson.learner_id !== c.learnerId || lesson.job_id !== c.jobId) {
        rejected.push({ id: c.id, reason: 'The lesson this check follows is of another learner or job.' })
        continue
      }
    }
    const row = existing.get(c.id)
    if (!row) {
      statements.push({
        sql: 'insert into spot_checks (id, organisation_id, coach_user_id, learner_id, job_id, version_id, lesson_id, started_at, elements, note, finished_at, interval_index, client_updated_at, updated_by_device, created_at) values (?,?,?,?,?,?,?,?,?,?,?,?,?,?,?)',
        args: [c.id, organisationId, c.coachUserId, c.learnerId, c.jobId, c.versionId, c.lessonId, c.startedAt, JSON.stringify(c.elements), c.note, c.finishedAt, c.intervalIndex, c.updatedAt, deviceId, now],
      })
      accepted.push(c.id)
      touched.add(c.id)
      checksWritten++
      continue
    }
    if (row.organisation_id !== organisationId) {
      rejected.push({ id: c.id, reason: 'This spot check id is already used elsewhere; start the check again on the tablet.' })
      continue
    }
    if (row.learner_id !== c.learnerId || row.job_id !== c.jobId || row.version_id !== c.versionId || (row.lesson_id ?? null) !== c.lessonId) {
      rejected.push({ id: c.id, reason: 'A spot check\'s learner, job, breakdown version and lesson cannot change after it starts.' })
      continue
    }
    const storedFinished = row.finished_at == null ? null : Number(row.finished_at)
    const storedClock = checkClock(storedFinished, Number(row.client_updated_at), row.updated_by_device as string, storedCheckFields(row))
    if (clockIsNewer(checkClock(c.finishedAt, c.updatedAt, deviceId, checkFields(c)), storedClock)) {
      // A finished copy always wins the clock, so an open copy never gets here over a finished one.
      statements.push({
        sql: 'update spot_checks set coach_user_id=?, started_at=?, elements=?, note=?, finished_at=?, interval_index=?, client_updated_at=?, updated_by_device=? where id=? and organisation_id=?',
        args: [c.coachUserId, c.startedAt, JSON.stringify(c.elements), c.note, c.finishedAt, c.intervalIndex, c.updatedAt, deviceId, c.id, organisationId],
      })
      touched.add(c.id)
      checksWritten++
    }
    else if (storedFinished !== null && c.finishedAt === null && c.updatedAt > Number(row.client_updated_at)) {
      rejected.push({ id: c.id, reason: 'This spot check was finished; it can no longer be changed.' })
      continue
    }
    accepted.push(c.id)
  }
  for (const part of inChunks(statements, 200)) await tx.batch(part)

  // Marks: by id, never overwritten; their check must be this organisation's.
  const knownChecks = new Set((await selectWhereIn(tx, 'select id from spot_checks where organisation_id = ? and id in', events.map(e => e.checkId), '', [organisationId])).map(r => r.id as string))
  const stored = new Map((await selectWhereIn(tx, 'select * from check_events where id in', events.map(e => e.id))).map(r => [r.id as string, r]))
  const fresh: SyncCheckEvent[] = []
  for (const e of events) {
    const row = stored.get(e.id)
    if (row) {
      if (row.organisation_id === organisationId && sameEvent(row, e)) accepted.push(e.id)
      else rejected.push({ id: e.id, reason: 'A different mark with this id is already stored; this one was not saved. Keep it on the tablet and tell your admin.' })
      continue
    }
    if (!knownChecks.has(e.checkId)) {
      rejected.push({ id: e.id, reason: 'The spot check of this mark is not on the server yet; send the check with it.' })
      continue
    }
    fresh.push(e)
  }
  for (const part of inChunks(fresh, 200)) {
    await tx.execute({
      sql: `insert into check_events (id, organisation_id, check_id, element_id, kind, value, client_time, device_id, seq, received_at) values ${part.map(() => '(?,?,?,?,?,?,?,?,?,?)').join(',')}`,
      args: part.flatMap(e => [e.id, organisationId, e.checkId, e.elementId, e.kind, e.value, e.clientTime, e.deviceId, e.seq, now]),
    })
    for (const e of part) {
      accepted.push(e.id)
      touched.add(e.checkId)
    }
    eventsWritten += part.length
    await yieldToLoop()
  }

  // Outcome and next date of every touched check, from all its stored marks.
  for (const checkId of touched) await storeCheckResult(tx, organisationId, checkId, contents)
  for (const part of inChunks([...touched])) {
    await tx.execute({ sql: `insert into change_feed (organisation_id, entity, entity_id) values ${part.map(() => '(?, \'check\', ?)').join(',')}`, args: part.flatMap(id => [organisationId, id]) })
  }

  // What the server holds for every check this push named, so a replay hears the same answer.
  const named = [...new Set([...newest.keys(), ...events.map(e => e.checkId)])]
  const results: Record<string, CheckServerResult> = {}
  for (const r of await selectWhereIn(tx, 'select id, outcome, next_interval_index, next_due_at from spot_checks where organisation_id = ? and id in', named, '', [organisationId])) {
    results[r.id as string] = { outcome: (r.outcome as CheckServerResult['outcome']) ?? null, nextIntervalIndex: r.next_interval_index == null ? null : Number(r.next_interval_index), nextDueAt: r.next_due_at == null ? null : Number(r.next_due_at) }
  }
  return { results, written: { checks: checksWritten, checkEvents: eventsWritten } }
}

/** Recomputes a check's outcome from its row and every stored mark; an open check has none. */
export async function storeCheckResult(tx: Transaction | Client, organisationId: string, checkId: string, contents = new Map<string, BreakdownContent>()) {
  const row = (await tx.execute({ sql: 'select id, version_id, elements, finished_at, interval_index from spot_checks where id = ? and organisation_id = ?', args: [checkId, organisationId] })).rows[0]
  if (!row) return
  if (row.finished_at == null) {
    await tx.execute({ sql: 'update spot_checks set outcome = null, next_interval_index = null, next_due_at = null where id = ? and organisation_id = ?', args: [checkId, organisationId] })
    return
  }
  const versionId = row.version_id as string
  let content = contents.get(versionId)
  if (!content) {
    const v = (await tx.execute({ sql: 'select content from breakdown_versions where id = ? and organisation_id = ?', args: [versionId, organisationId] })).rows[0]
    content = JSON.parse(String(v!.content)) as BreakdownContent
    contents.set(versionId, content)
  }
  const events = (await tx.execute({ sql: 'select * from check_events where check_id = ? and organisation_id = ?', args: [checkId, organisationId] })).rows.map(r => rowToEvent(r as unknown as Record<string, unknown>))
  const result = checkResult({ elements: JSON.parse(String(row.elements)) as string[], intervalIndex: Number(row.interval_index), finishedAt: Number(row.finished_at) }, events, content)
  await tx.execute({ sql: 'update spot_checks set outcome = ?, next_interval_index = ?, next_due_at = ? where id = ? and organisation_id = ?', args: [result.outcome, result.nextIntervalIndex, result.nextDueAt, checkId, organisationId] })
}
