// Merges one device's push into SQLite (DESIGN.md §7, issue 5):
// - events are append-only, inserted by id; the same id with the same content is a no-op and the
//   same id with other content is rejected as a conflict, never overwritten;
// - lesson fields merge last-writer-wins on (signed off, client time, device id), so any order of
//   arrival ends in the same row; a signed-off lesson then only takes an acknowledgement;
// - spot checks and their marks (events naming checkId) follow the same rules (sync-checks.ts);
// - a refresher lesson (focus) is scored on the focused part of its breakdown only;
// - scores of every touched lesson are recomputed from all its events with shared/utils.
// The hot path uses the libSQL client directly: chunked multi-row inserts inside one write
// transaction, yielding to the event loop between chunks so other requests keep moving. Every
// native call is synchronous, so no single one may be long: events are validated, looked up,
// inserted and read back for scoring in bounded chunks (DEVELOPERS.md, "Sync write path").
import type { Client, InStatement, Transaction } from '@libsql/client'
import { syncEventSchema, syncLessonSchema, type SyncEvent, type SyncLesson } from '../../shared/schemas/sync'
import type { BreakdownContent } from '../../shared/schemas/breakdown'
import { replayLesson } from '../../shared/utils/lesson-state'
import { focusContent } from '../../shared/utils/refresher'
import { serialiseWrite } from './write-lock'
import { VALIDATE_CHUNK, clockIsNewer, firstIssue, inChunks, pinnedToOrganisation, pushedItemId, selectWhereIn, yieldToLoop, type Rejection, type SyncClock } from './sync-batch'
import { checksOfOrganisation, isCheckEventItem, validateCheckItems, writeChecks, type CheckServerResult } from './sync-checks'
import type { LessonEvent } from '../../shared/utils/lesson-events'

export interface LessonScore { t1: number | null, t2: number | null, t3: number | null, t4: number | null, order: number | null, recall: number | null, readiness: 'ready' | 'another-pass', represent: unknown[] }
export interface MergeResult { accepted: string[], rejected: Rejection[], scores: Record<string, LessonScore>, checks: Record<string, CheckServerResult>, cursor: number, written: { lessons: number, events: number, checks: number, checkEvents: number } }

/** Event rows per multi-row insert (200 × 11 bound variables): about 2 ms per statement. */
const INSERT_CHUNK = 200
/** Stored events read back per statement when a lesson is scored (about 1.5 ms). */
const READ_CHUNK = 1000

/**
 * Rows of lesson_events come back as one JSON text per statement (json_group_array): the client
 * builds a JS object for every row and column it returns, which costs more than the query itself;
 * one string and JSON.parse are several times cheaper, and integers below 2^53 come back exact.
 */
const EVENT_COLUMNS = ['id', 'organisation_id', 'lesson_id', 'pass', 'element_id', 'kind', 'value', 'client_time', 'device_id', 'seq'] as const
const EVENT_JSON = `json_group_array(json_array(${EVENT_COLUMNS.join(', ')}))`

async function storedEventsById(tx: Transaction, ids: readonly string[]) {
  const byId = new Map<string, Record<string, unknown>>()
  // One bounded statement and its rows at a time, with a yield between: a replayed push finds
  // every one of its 10,000 events stored, and reading them all before unpacking any held the
  // event loop for 25–40 ms.
  for (const part of inChunks([...new Set(ids)])) {
    for (const row of await selectWhereIn(tx, `select ${EVENT_JSON} as rows from lesson_events where id in`, part)) {
      for (const values of JSON.parse(row.rows as string) as unknown[][]) {
        const [id, organisation_id, lesson_id, pass, element_id, kind, value, client_time, device_id, seq] = values
        byId.set(id as string, { id, organisation_id, lesson_id, pass, element_id, kind, value, client_time, device_id, seq })
      }
    }
    await yieldToLoop()
  }
  return byId
}

/** A lesson's clock (see SyncClock): signed off counts as closed. */
function lessonClock(l: { signedOffAt: number | null, updatedAt: number, deviceId: string }, fields: string): SyncClock {
  return [l.signedOffAt ? 1 : 0, l.updatedAt, l.deviceId, fields]
}

function mergeableFields(l: { coachUserId: string | null, place: string, startedAt: number, prepare: unknown, helper: string, decision: string | null, signedOffAt: number | null, stageSeconds: unknown, focus: readonly string[] | null }) {
  return JSON.stringify([l.coachUserId, l.place, l.startedAt, l.prepare, l.helper, l.decision, l.signedOffAt, l.stageSeconds, l.focus])
}

function storedFields(row: Record<string, unknown>) {
  return mergeableFields({ coachUserId: row.coach_user_id as string | null, place: row.place as string, startedAt: Number(row.started_at), prepare: JSON.parse(String(row.prepare ?? '{}')), helper: row.helper as string, decision: (row.decision as string | null) ?? null, signedOffAt: row.signed_off_at == null ? null : Number(row.signed_off_at), stageSeconds: JSON.parse(String(row.stage_seconds ?? '{}')), focus: row.focus == null ? null : JSON.parse(String(row.focus)) as string[] })
}

function ackKey(ack: { at: number, name: string } | null) {
  return ack ? `${String(ack.at).padStart(16, '0')}|${ack.name}` : ''
}

function sameEvent(row: Record<string, unknown>, e: SyncEvent) {
  return row.lesson_id === e.lessonId && row.pass === e.pass && (row.element_id ?? null) === e.elementId && row.kind === e.kind
    && (row.value ?? null) === e.value && Number(row.client_time) === e.clientTime && row.device_id === e.deviceId && Number(row.seq) === e.seq
}

export async function mergePush(client: Client, organisationId: string, deviceId: string, body: { lessons: unknown[], events: unknown[], checks: unknown[] }, now = Date.now()): Promise<MergeResult> {
  const accepted: string[] = []
  const rejected: Rejection[] = []

  // 1. Each item on its own.
  const lessons: SyncLesson[] = []
  let validated = 0
  for (const item of body.lessons) {
    if (++validated % VALIDATE_CHUNK === 0) await yieldToLoop()
    const r = syncLessonSchema.safeParse(item)
    if (r.success) lessons.push(r.data)
    else rejected.push({ id: pushedItemId(item), reason: `Lesson not valid — ${firstIssue(r.error)}` })
  }
  const events: SyncEvent[] = []
  const checkEventItems: unknown[] = []
  const seenInPush = new Map<string, SyncEvent>()
  for (const item of body.events) {
    if (++validated % VALIDATE_CHUNK === 0) await yieldToLoop()
    // A spot check's mark names checkId instead of lessonId; it is checked with the checks below.
    if (isCheckEventItem(item)) {
      checkEventItems.push(item)
      continue
    }
    const r = syncEventSchema.safeParse(item)
    if (!r.success) {
      rejected.push({ id: pushedItemId(item), reason: `Mark not valid — ${firstIssue(r.error)}` })
      continue
    }
    const e = r.data
    if (e.deviceId !== deviceId) {
      rejected.push({ id: e.id, reason: 'This mark was recorded on another tablet; that tablet must send it.' })
      continue
    }
    const twin = seenInPush.get(e.id)
    if (twin) {
      if (JSON.stringify(twin) !== JSON.stringify(e)) rejected.push({ id: e.id, reason: 'The same mark id appears twice in this push with different content.' })
      continue
    }
    seenInPush.set(e.id, e)
    events.push(e)
  }
  const checkItems = await validateCheckItems(deviceId, body.checks, checkEventItems, rejected)

  // 2. Every id a lesson names must belong to this organisation.
  const { valid: validLessons } = await pinnedToOrganisation(client, organisationId, lessons, 'A lesson must be pinned to a published breakdown, not a draft.', rejected)
  const validChecks = await checksOfOrganisation(client, organisationId, checkItems.checks, rejected)

  return serialiseWrite(async () => {
    const tx = await client.transaction('write')
    try {
      const result = await writeMerge(tx, organisationId, deviceId, validLessons, events, now, accepted, rejected)
      const checks = await writeChecks(tx, organisationId, deviceId, validChecks.checks, validChecks.contents, checkItems.events, now, accepted, rejected)
      result.checks = checks.results
      result.written = { ...result.written, ...checks.written }
      if (checks.written.checks + checks.written.checkEvents > 0) result.cursor = await feedTop(tx, organisationId)
      await tx.commit()
      return result
    }
    finally {
      tx.close()
    }
  })
}

async function writeMerge(tx: Transaction, organisationId: string, deviceId: string, lessons: SyncLesson[], events: SyncEvent[], now: number, accepted: string[], rejected: Rejection[]): Promise<MergeResult> {
  const touched = new Set<string>()
  const feed = new Set<string>()
  let lessonsWritten = 0
  let eventsWritten = 0

  // 3. Lessons: the newest copy of each in this push (and the latest acknowledgement any copy
  // carries), then insert new ones and merge known ones.
  const newest = new Map<string, SyncLesson>()
  for (const l of lessons) {
    const seen = newest.get(l.id)
    const ack = seen && ackKey(seen.acknowledgement) > ackKey(l.acknowledgement) ? seen.acknowledgement : l.acknowledgement
    const winner = !seen || clockIsNewer(lessonClock({ ...l, deviceId }, mergeableFields(l)), lessonClock({ ...seen, deviceId }, mergeableFields(seen))) ? l : seen
    newest.set(l.id, { ...winner, acknowledgement: ack })
  }
  const existing = new Map((await selectWhereIn(tx, 'select * from lessons where id in', [...newest.keys()])).map(r => [r.id as string, r]))
  const statements: InStatement[] = []
  for (const l of newest.values()) {
    const row = existing.get(l.id)
    if (!row) {
      statements.push({
        sql: 'insert into lessons (id, organisation_id, coach_user_id, learner_id, job_id, version_id, place, started_at, prepare, helper, decision, acknowledgement, signed_off_at, stage_seconds, focus, client_updated_at, updated_by_device, created_at) values (?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?,?)',
        args: [l.id, organisationId, l.coachUserId, l.learnerId, l.jobId, l.versionId, l.place, l.startedAt, JSON.stringify(l.prepare), l.helper, l.decision, l.acknowledgement ? JSON.stringify(l.acknowledgement) : null, l.signedOffAt, JSON.stringify(l.stageSeconds), l.focus ? JSON.stringify(l.focus) : null, l.updatedAt, deviceId, now],
      })
      existing.set(l.id, { id: l.id, organisation_id: organisationId, coach_user_id: l.coachUserId, learner_id: l.learnerId, job_id: l.jobId, version_id: l.versionId, place: l.place, started_at: l.startedAt, prepare: JSON.stringify(l.prepare), helper: l.helper, decision: l.decision, signed_off_at: l.signedOffAt, stage_seconds: JSON.stringify(l.stageSeconds), focus: l.focus ? JSON.stringify(l.focus) : null, client_updated_at: l.updatedAt, updated_by_device: deviceId, acknowledgement: l.acknowledgement ? JSON.stringify(l.acknowledgement) : null })
      accepted.push(l.id)
      touched.add(l.id)
      feed.add(l.id)
      lessonsWritten++
      continue
    }
    if (row.organisation_id !== organisationId) {
      rejected.push({ id: l.id, reason: 'This lesson id is already used elsewhere; start the lesson again on the tablet.' })
      continue
    }
    if (row.learner_id !== l.learnerId || row.job_id !== l.jobId || row.version_id !== l.versionId) {
      rejected.push({ id: l.id, reason: 'A lesson\'s learner, job and breakdown version cannot change after it starts.' })
      continue
    }
    const stored = { signedOffAt: row.signed_off_at as number | null, updatedAt: Number(row.client_updated_at), deviceId: row.updated_by_device as string }
    const storedAck = row.acknowledgement ? JSON.parse(row.acknowledgement as string) as { at: number, name: string } : null
    const ackWins = ackKey(l.acknowledgement) > ackKey(storedAck)
    if (clockIsNewer(lessonClock({ signedOffAt: l.signedOffAt, updatedAt: l.updatedAt, deviceId }, mergeableFields(l)), lessonClock(stored, storedFields(row)))) {
      // A signed-off copy always wins the clock, so an open copy never gets here over a signed-off one.
      const ack = ackWins ? l.acknowledgement : storedAck
      statements.push({
        sql: 'update lessons set coach_user_id=?, place=?, started_at=?, prepare=?, helper=?, decision=?, acknowledgement=?, signed_off_at=?, stage_seconds=?, focus=?, client_updated_at=?, updated_by_device=? where id=? and organisation_id=?',
        args: [l.coachUserId, l.place, l.startedAt, JSON.stringify(l.prepare), l.helper, l.decision, ack ? JSON.stringify(ack) : null, l.signedOffAt, JSON.stringify(l.stageSeconds), l.focus ? JSON.stringify(l.focus) : null, l.updatedAt, deviceId, l.id, organisationId],
      })
      feed.add(l.id)
      touched.add(l.id)
      lessonsWritten++
    }
    else if (ackWins) {
      // An older copy can still bring the acknowledgement the learner gave on that tablet.
      statements.push({ sql: 'update lessons set acknowledgement=? where id=? and organisation_id=?', args: [JSON.stringify(l.acknowledgement), l.id, organisationId] })
      feed.add(l.id)
      lessonsWritten++
    }
    else if (stored.signedOffAt && !l.signedOffAt && l.updatedAt > stored.updatedAt) {
      rejected.push({ id: l.id, reason: 'This lesson was signed off; only the learner\'s acknowledgement can still be added.' })
      continue
    }
    accepted.push(l.id)
  }
  for (const part of inChunks(statements, 200)) {
    await tx.batch(part)
    await yieldToLoop()
  }

  // 4. Events: by id, never overwritten.
  const knownLessons = new Set((await selectWhereIn(tx, 'select id from lessons where organisation_id = ? and id in', events.map(e => e.lessonId), '', [organisationId])).map(r => r.id as string))
  const existingEvents = await storedEventsById(tx, events.map(e => e.id))
  const fresh: SyncEvent[] = []
  for (const e of events) {
    const row = existingEvents.get(e.id)
    if (row) {
      if (row.organisation_id === organisationId && sameEvent(row, e)) accepted.push(e.id)
      else rejected.push({ id: e.id, reason: 'A different mark with this id is already stored; this one was not saved. Keep it on the tablet and tell your admin.' })
      continue
    }
    if (!knownLessons.has(e.lessonId)) {
      rejected.push({ id: e.id, reason: 'The lesson of this mark is not on the server yet; send the lesson with it.' })
      continue
    }
    fresh.push(e)
  }

  // Every lesson scored below: its events already stored, read before the fresh ones go in, so
  // after the insert its events are exactly these plus its fresh ones (no re-reading of what this
  // push just wrote). A lesson that is new in this push reads nothing.
  const freshByLesson = new Map<string, SyncEvent[]>()
  for (const e of fresh) {
    const list = freshByLesson.get(e.lessonId)
    if (list) list.push(e)
    else freshByLesson.set(e.lessonId, [e])
  }
  const toScore = new Set([...touched, ...freshByLesson.keys()])
  const storedEvents = new Map<string, LessonEvent[]>()
  for (const lessonId of toScore) {
    storedEvents.set(lessonId, await readLessonEvents(tx, organisationId, lessonId))
  }

  for (const part of inChunks(fresh, INSERT_CHUNK)) {
    await tx.execute({
      sql: `insert into lesson_events (id, organisation_id, lesson_id, pass, element_id, kind, value, client_time, device_id, seq, received_at) values ${part.map(() => '(?,?,?,?,?,?,?,?,?,?,?)').join(',')}`,
      args: part.flatMap(e => [e.id, organisationId, e.lessonId, e.pass, e.elementId, e.kind, e.value, e.clientTime, e.deviceId, e.seq, now]),
    })
    for (const e of part) {
      accepted.push(e.id)
      touched.add(e.lessonId)
      feed.add(e.lessonId)
    }
    eventsWritten += part.length
    await yieldToLoop()
  }

  // 5. Scores of every touched lesson, from all of its events.
  const scores: Record<string, LessonScore> = {}
  for (const lessonId of touched) {
    const stored = storedEvents.get(lessonId)!
    const added = freshByLesson.get(lessonId)
    scores[lessonId] = await storeScore(tx, organisationId, lessonId, added ? stored.concat(added) : stored, now)
    await yieldToLoop()
  }
  for (const part of inChunks([...feed])) {
    await tx.execute({ sql: `insert into change_feed (organisation_id, entity, entity_id) values ${part.map(() => '(?, \'lesson\', ?)').join(',')}`, args: part.flatMap(id => [organisationId, id]) })
  }
  const cursor = await feedTop(tx, organisationId)
  return { accepted, rejected, scores, checks: {}, cursor, written: { lessons: lessonsWritten, events: eventsWritten, checks: 0, checkEvents: 0 } }
}

async function feedTop(tx: Transaction, organisationId: string) {
  return Number((await tx.execute({ sql: 'select coalesce(max(seq), 0) as c from change_feed where organisation_id = ?', args: [organisationId] })).rows[0]!.c)
}

/** Every stored event of a lesson, read in chunks of READ_CHUNK rows with a yield between them. */
async function readLessonEvents(tx: Transaction | Client, organisationId: string, lessonId: string): Promise<LessonEvent[]> {
  const events: LessonEvent[] = []
  // The lesson_id index holds (lesson_id, rowid), so each chunk is one range scan; the order
  // inside a chunk does not matter (replayLesson sorts), only the last rowid for the next one.
  for (let after = -1; ;) {
    const row = (await tx.execute({
      sql: `select ${EVENT_JSON} as rows, count(*) as n, max(rowid_) as last from (select rowid as rowid_, ${EVENT_COLUMNS.join(', ')} from lesson_events where lesson_id = ? and organisation_id = ? and rowid > ? order by rowid limit ?)`,
      args: [lessonId, organisationId, after, READ_CHUNK],
    })).rows[0]!
    for (const [id, , , pass, elementId, kind, value, clientTime, deviceId, seq] of JSON.parse(row.rows as string) as unknown[][]) {
      events.push({ id: id as string, lessonId, pass: pass as string, elementId: (elementId as string | null) ?? null, kind: kind as LessonEvent['kind'], value: (value as string | null) ?? null, clientTime: Number(clientTime), deviceId: deviceId as string, seq: Number(seq) })
    }
    if (Number(row.n) < READ_CHUNK) return events
    after = Number(row.last)
    await yieldToLoop()
  }
}

/** Recomputes a lesson's score from every event stored for it, and stores the score. */
export async function rescore(tx: Transaction | Client, organisationId: string, lessonId: string, now = Date.now()): Promise<LessonScore> {
  return storeScore(tx, organisationId, lessonId, await readLessonEvents(tx, organisationId, lessonId), now)
}

/** Scores a lesson from `events` (all of its events) with shared/utils and stores the score. */
async function storeScore(tx: Transaction | Client, organisationId: string, lessonId: string, events: readonly LessonEvent[], now: number): Promise<LessonScore> {
  const versionRow = (await tx.execute({ sql: 'select v.content, l.focus from lessons l join breakdown_versions v on v.id = l.version_id where l.id = ? and l.organisation_id = ?', args: [lessonId, organisationId] })).rows[0]
  // A refresher is scored on the part of the breakdown it taught, as the tablet does.
  const focus = versionRow!.focus == null ? null : JSON.parse(String(versionRow!.focus)) as string[]
  const content = focusContent(JSON.parse(versionRow!.content as string) as BreakdownContent, focus)
  const state = replayLesson(events, content)
  const score: LessonScore = { t1: state.scores.T1, t2: state.scores.T2, t3: state.scores.T3, t4: state.scores.T4, order: state.scores.order, recall: state.scores.recall, readiness: state.readiness.suggestion, represent: state.readiness.represent }
  await tx.execute({
    sql: `insert into lesson_scores (lesson_id, organisation_id, t1, t2, t3, t4, order_score, recall, readiness, represent, event_count, computed_at) values (?,?,?,?,?,?,?,?,?,?,?,?)
          on conflict(lesson_id) do update set t1=excluded.t1, t2=excluded.t2, t3=excluded.t3, t4=excluded.t4, order_score=excluded.order_score, recall=excluded.recall, readiness=excluded.readiness, represent=excluded.represent, event_count=excluded.event_count, computed_at=excluded.computed_at`,
    args: [lessonId, organisationId, score.t1, score.t2, score.t3, score.t4, score.order, score.recall, score.readiness, JSON.stringify(score.represent), events.length, now],
  })
  return score
}
