// What a tablet needs to know from the server: published breakdowns (with their job), the roster,
// lessons with their scores, spot checks with their outcome and next date, and the plan's items.
// since=0 is a full snapshot; a later cursor reads the change feed. Due checks are derived (from
// trainingRows), so the route sends them whole on every pull (tabletDueChecks).
import type { Client } from '@libsql/client'
import type { TrainingRow } from './training-state'

const PAGE = 2000

function json<T>(value: unknown, fallback: T): T {
  try {
    return value == null ? fallback : JSON.parse(String(value)) as T
  }
  catch {
    return fallback
  }
}

export async function pullChanges(client: Client, organisationId: string, since: number) {
  const tx = await client.transaction('read')
  try {
    const top = Number((await tx.execute({ sql: 'select coalesce(max(seq), 0) as c from change_feed where organisation_id = ?', args: [organisationId] })).rows[0]!.c)
    let cursor = top
    let more = false
    let ids: { version: string[] | null, learner: string[] | null, lesson: string[] | null, check: string[] | null, plan: string[] | null } = { version: null, learner: null, lesson: null, check: null, plan: null }
    if (since > 0) {
      const rows = (await tx.execute({ sql: 'select seq, entity, entity_id from change_feed where organisation_id = ? and seq > ? order by seq limit ?', args: [organisationId, since, PAGE + 1] })).rows
      more = rows.length > PAGE
      const page = rows.slice(0, PAGE)
      cursor = page.length ? Number(page.at(-1)!.seq) : Math.max(since, 0)
      const of = (entity: string) => [...new Set(page.filter(r => r.entity === entity).map(r => r.entity_id as string))]
      ids = { version: of('version'), learner: of('learner'), lesson: of('lesson'), check: of('check'), plan: of('plan') }
    }
    const where = (list: string[] | null, column = 'id') => (list === null ? { sql: '', args: [] as string[] } : { sql: ` and ${column} in (${list.map(() => '?').join(',') || 'null'})`, args: list })

    const v = where(ids.version, 'v.id')
    const versionRows = (await tx.execute({
      sql: `select v.id, v.job_id, v.number, v.status, v.published_at, v.content, j.title, j.purpose, j.hazards, j.ppe, j.tools_and_materials, j.workplace_arrangement, j.archived_at, w.name as work_area_name
            from breakdown_versions v join jobs j on j.id = v.job_id left join work_areas w on w.id = j.work_area_id
            where v.organisation_id = ? and v.status != 'draft'${v.sql}`,
      args: [organisationId, ...v.args],
    })).rows
    const versions = versionRows.filter(r => r.status === 'published' && !r.archived_at).map(r => ({
      id: r.id as string,
      jobId: r.job_id as string,
      organisationId,
      number: Number(r.number),
      publishedAt: r.published_at == null ? null : Number(r.published_at),
      content: json(r.content, { units: [] }),
      job: {
        title: r.title as string,
        purpose: r.purpose as string,
        hazards: json(r.hazards, []),
        ppe: json(r.ppe, []),
        toolsAndMaterials: json(r.tools_and_materials, []),
        workplaceArrangement: r.workplace_arrangement as string,
        workAreaName: (r.work_area_name as string | null) ?? null,
      },
    }))
    // A version that was retired, or whose job was archived, leaves the tablets.
    const removedVersions = versionRows.filter(r => r.status !== 'published' || r.archived_at).map(r => r.id as string)

    const l = where(ids.learner, 'le.id')
    const learnerRows = (await tx.execute({
      sql: `select le.id, le.name, le.reference, le.archived_at, w.name as work_area_name from learners le left join work_areas w on w.id = le.work_area_id where le.organisation_id = ?${l.sql}`,
      args: [organisationId, ...l.args],
    })).rows
    const learners = learnerRows.filter(r => !r.archived_at).map(r => ({ id: r.id as string, organisationId, name: r.name as string, reference: r.reference as string, workAreaName: (r.work_area_name as string | null) ?? null }))
    const removedLearners = learnerRows.filter(r => r.archived_at).map(r => r.id as string)

    const s = where(ids.lesson, 'l.id')
    const lessonRows = (await tx.execute({
      sql: `select l.id, l.coach_user_id, l.learner_id, l.job_id, l.version_id, l.place, l.started_at, l.decision, l.signed_off_at, l.client_updated_at, l.acknowledgement,
                   sc.t1, sc.t2, sc.t3, sc.t4, sc.order_score, sc.recall, sc.readiness
            from lessons l left join lesson_scores sc on sc.lesson_id = l.id where l.organisation_id = ?${s.sql}`,
      args: [organisationId, ...s.args],
    })).rows
    const lessons = lessonRows.map(r => ({
      id: r.id as string,
      coachUserId: r.coach_user_id as string | null,
      learnerId: r.learner_id as string,
      jobId: r.job_id as string,
      versionId: r.version_id as string,
      place: r.place as string,
      startedAt: Number(r.started_at),
      decision: r.decision as string | null,
      signedOffAt: r.signed_off_at == null ? null : Number(r.signed_off_at),
      updatedAt: Number(r.client_updated_at),
      acknowledged: !!r.acknowledgement,
      score: r.readiness == null ? null : { t1: r.t1, t2: r.t2, t3: r.t3, t4: r.t4, order: r.order_score, recall: r.recall, readiness: r.readiness },
    }))

    const c = where(ids.check, 'id')
    const checkRows = (await tx.execute({
      sql: `select id, coach_user_id, learner_id, job_id, version_id, lesson_id, started_at, elements, note, finished_at, outcome, interval_index, next_interval_index, next_due_at, client_updated_at
            from spot_checks where organisation_id = ?${c.sql}`,
      args: [organisationId, ...c.args],
    })).rows
    const checks = checkRows.map(r => ({
      id: r.id as string,
      coachUserId: r.coach_user_id as string | null,
      learnerId: r.learner_id as string,
      jobId: r.job_id as string,
      versionId: r.version_id as string,
      lessonId: (r.lesson_id as string | null) ?? null,
      startedAt: Number(r.started_at),
      elements: json<string[]>(r.elements, []),
      note: r.note as string,
      finishedAt: r.finished_at == null ? null : Number(r.finished_at),
      intervalIndex: Number(r.interval_index),
      updatedAt: Number(r.client_updated_at),
      result: r.outcome == null ? null : { outcome: r.outcome as 'clean' | 'stay' | 'reteach', nextIntervalIndex: Number(r.next_interval_index), nextDueAt: Number(r.next_due_at) },
    }))

    const p = where(ids.plan, 'id')
    const planRows = (await tx.execute({ sql: `select id, learner_id, job_id, target_date, reason, note from plan_items where organisation_id = ?${p.sql}`, args: [organisationId, ...p.args] })).rows
    const planItems = planRows.map(r => ({ id: r.id as string, organisationId, learnerId: r.learner_id as string, jobId: r.job_id as string, targetDate: (r.target_date as string | null) ?? null, reason: r.reason as string, note: (r.note as string) ?? '' }))
    // A plan item named in the feed but gone was taken off the plan.
    const removedPlanItems = ids.plan === null ? [] : ids.plan.filter(id => !planItems.some(i => i.id === id))

    return { cursor, more, versions, removedVersions, learners, removedLearners, lessons, checks, planItems, removedPlanItems }
  }
  finally {
    tx.close()
  }
}

export interface DueCheck { key: string, organisationId: string, learnerId: string, jobId: string, versionId: string, lessonId: string | null, dueAt: number, intervalIndex: number, lastCheckId: string | null }

/**
 * The checks a tablet should offer, from the derived training state: every ready learner × job
 * with a next check date (due, late or coming), leaving out archived learners and jobs, pinned to
 * the version they were trained on.
 */
export async function tabletDueChecks(client: Client, organisationId: string, rows: readonly TrainingRow[]): Promise<DueCheck[]> {
  const [learners, jobs] = await client.batch([
    { sql: 'select id from learners where organisation_id = ? and archived_at is null', args: [organisationId] },
    { sql: 'select id from jobs where organisation_id = ? and archived_at is null', args: [organisationId] },
  ], 'read')
  const liveLearners = new Set(learners!.rows.map(r => r.id as string))
  const liveJobs = new Set(jobs!.rows.map(r => r.id as string))
  return rows
    .filter(r => (r.status === 'ready' || r.status === 'check-due') && r.nextCheckAt !== null && liveLearners.has(r.learnerId) && liveJobs.has(r.jobId) && (r.trainedVersionId ?? r.currentVersionId))
    .map(r => ({
      key: `${r.learnerId}:${r.jobId}`,
      organisationId,
      learnerId: r.learnerId,
      jobId: r.jobId,
      versionId: (r.trainedVersionId ?? r.currentVersionId)!,
      lessonId: r.lastLessonId,
      dueAt: r.nextCheckAt!,
      intervalIndex: r.nextIntervalIndex,
      lastCheckId: r.lastCheckId,
    }))
    .sort((a, b) => a.dueAt - b.dueAt)
}
