// The derived training state of every learner × job of one organisation (shared/utils/training-status.ts),
// loaded set-based: one read batch of four statements (plan items, lessons, finished spot checks,
// published versions), whatever the number of learners, then grouped in memory. The plan, Today's
// due checks (GET /api/sync) and the reminder digest all read it, so they agree on every cell.
import type { InValue } from '@libsql/client'
import { dayBounds, trainingCell, type TrainingCell, type TrainingFacts } from '../../shared/utils/training-status'
import type { PlanReason } from '../../shared/types/plan'
import { nextCheckDate } from '../../shared/utils/spot-check-schedule'
import { organisationCache } from './organisation-cache'

export interface TrainingRow extends TrainingCell {
  learnerId: string
  jobId: string
  planItem: TrainingFacts['planItem']
  currentVersionId: string | null
  currentVersionNumber: number | null
  /** the latest signed-off lesson (the one that decides readiness) */
  lastLessonId: string | null
  /** the latest finished spot check */
  lastCheckId: string | null
}

export interface TrainingFilter { learnerIds?: string[], jobIds?: string[] }

// Id lists longer than this are filtered in memory rather than bound into the statement
// (SQLite's 32,766 bound-variable limit, and long IN lists are no faster than a scan of one org).
const MAX_BOUND_IDS = 500

function idClause(column: string, ids: string[] | undefined): { sql: string, args: string[] } {
  if (!ids || ids.length > MAX_BOUND_IDS) return { sql: '', args: [] }
  if (!ids.length) return { sql: ' and 0', args: [] }
  return { sql: ` and ${column} in (${ids.map(() => '?').join(',')})`, args: ids }
}

function parseFocus(value: unknown): string[] | null {
  if (value == null) return null
  try {
    const parsed = JSON.parse(String(value))
    return Array.isArray(parsed) ? parsed.map(String) : null
  }
  catch {
    return null
  }
}

const num = (v: unknown) => (v == null ? null : Number(v))

// The whole organisation's rows are read by every tablet pull (due checks), the plan, the roster
// summary and the digest: derived once per change of the organisation's data and day, like the plan
// (organisation-cache.ts: checked against a database stamp on every call). The cells depend on the
// day only (due today, late), never on the time of day. A filtered call reads the database directly.
const wholeOrganisation = organisationCache<readonly TrainingRow[]>(8)

/** Every learner × job pair that has a plan item, a lesson or a check, for one organisation (archived learners and jobs included; callers leave them out). */
export async function trainingRows(organisationId: string, filter: TrainingFilter = {}, now: number = Date.now()): Promise<TrainingRow[]> {
  if (filter.learnerIds || filter.jobIds) return loadTrainingRows(organisationId, filter, now)
  // A copy of the list, so a caller's sort never reorders the shared one; the rows are frozen.
  return [...await wholeOrganisation.get(organisationId, now, async () => Object.freeze((await loadTrainingRows(organisationId, {}, now)).map(r => Object.freeze(r))))]
}

async function loadTrainingRows(organisationId: string, filter: TrainingFilter, now: number): Promise<TrainingRow[]> {
  const db = await useDb()
  const clauses = (learnerCol: string, jobCol: string) => {
    const l = idClause(learnerCol, filter.learnerIds)
    const j = idClause(jobCol, filter.jobIds)
    return { sql: l.sql + j.sql, args: [organisationId, ...l.args, ...j.args] as InValue[] }
  }
  const p = clauses('learner_id', 'job_id')
  const l = clauses('l.learner_id', 'l.job_id')
  const c = clauses('learner_id', 'job_id')
  const v = idClause('job_id', filter.jobIds)
  // Each statement answers one JSON text (json_group_array) rather than a row object per row: the
  // client's per-row mapping costs several times more than JSON.parse of the same data.
  const results = await db.$client.batch([
    { sql: `select json_group_array(json_array(id, learner_id, job_id, target_date, reason, note)) as j from plan_items where organisation_id = ?${p.sql}`, args: p.args },
    {
      sql: `select json_group_array(json_array(l.id, l.learner_id, l.job_id, l.version_id, v.number, l.signed_off_at, l.decision, l.focus)) as j
            from lessons l join breakdown_versions v on v.id = l.version_id
            where l.organisation_id = ?${l.sql}`,
      args: l.args,
    },
    {
      sql: `select json_group_array(json_array(id, learner_id, job_id, finished_at, outcome, next_interval_index, next_due_at)) as j from spot_checks
            where organisation_id = ? and finished_at is not null and outcome is not null${c.sql}`,
      args: c.args,
    },
    { sql: `select json_group_array(json_array(job_id, id, number)) as j from breakdown_versions where organisation_id = ? and status = 'published'${v.sql}`, args: [organisationId, ...v.args] },
  ], 'read')
  const [planList, lessonList, checkList, versionList] = results.map(r => JSON.parse(String(r.rows[0]?.j ?? '[]')) as unknown[][])

  const learnerSet = filter.learnerIds ? new Set(filter.learnerIds) : null
  const jobSet = filter.jobIds ? new Set(filter.jobIds) : null
  const current = new Map<string, { id: string, number: number }>()
  for (const [jobId, id, number] of versionList as Array<[string, string, number]>) {
    const known = current.get(jobId)
    if (!known || known.number < number) current.set(jobId, { id, number })
  }

  interface Pair { learnerId: string, jobId: string, facts: TrainingFacts }
  const pairs = new Map<string, Pair>()
  const pairOf = (learnerId: string, jobId: string): Pair | null => {
    if ((learnerSet && !learnerSet.has(learnerId)) || (jobSet && !jobSet.has(jobId))) return null
    const key = `${learnerId}|${jobId}`
    let pair = pairs.get(key)
    if (!pair) {
      pair = { learnerId, jobId, facts: { planItem: null, current: current.get(jobId) ?? null, lessons: [], lessonInProgress: false, checks: [] } }
      pairs.set(key, pair)
    }
    return pair
  }

  for (const [id, learnerId, jobId, targetDate, reason, note] of planList as Array<[string, string, string, string | null, PlanReason, string | null]>) {
    const pair = pairOf(learnerId, jobId)
    if (pair) pair.facts.planItem = { id, targetDate: targetDate ?? null, reason, note: note ?? '' }
  }
  for (const [id, learnerId, jobId, versionId, number, signedOffAt, decision, focus] of lessonList as Array<[string, string, string, string, number, number | null, 'ready' | 'another-pass' | null, unknown]>) {
    const pair = pairOf(learnerId, jobId)
    if (!pair) continue
    if (signedOffAt == null) {
      pair.facts.lessonInProgress = true
      continue
    }
    pair.facts.lessons.push({ id, versionId, versionNumber: Number(number), signedOffAt: Number(signedOffAt), decision: decision ?? null, focus: parseFocus(focus) })
  }
  for (const [id, learnerId, jobId, finished, outcome, nextIndexValue, nextDueAt] of checkList as Array<[string, string, string, number, 'clean' | 'stay' | 'reteach', number | null, number | null]>) {
    const pair = pairOf(learnerId, jobId)
    if (!pair) continue
    const finishedAt = Number(finished)
    const nextIndex = num(nextIndexValue) ?? 0
    pair.facts.checks.push({
      id,
      finishedAt,
      outcome,
      nextIntervalIndex: nextIndex,
      // The sync merge always stores it; worked out the same way should a row lack it.
      nextDueAt: num(nextDueAt) ?? nextCheckDate(new Date(finishedAt), nextIndex).getTime(),
    })
  }

  const out: TrainingRow[] = []
  const day = dayBounds(now)
  for (const { learnerId, jobId, facts } of pairs.values()) {
    const lastLesson = facts.lessons.reduce<TrainingFacts['lessons'][number] | null>((a, b) => (!a || b.signedOffAt > a.signedOffAt || (b.signedOffAt === a.signedOffAt && b.id > a.id) ? b : a), null)
    const lastCheck = facts.checks.reduce<TrainingFacts['checks'][number] | null>((a, b) => (!a || b.finishedAt > a.finishedAt || (b.finishedAt === a.finishedAt && b.id > a.id) ? b : a), null)
    out.push({
      ...trainingCell(facts, now, day),
      learnerId,
      jobId,
      planItem: facts.planItem,
      currentVersionId: facts.current?.id ?? null,
      currentVersionNumber: facts.current?.number ?? null,
      lastLessonId: lastLesson?.id ?? null,
      lastCheckId: lastCheck?.id ?? null,
    })
  }
  return out
}
