// What a tablet needs to know from the server: published breakdowns (with their job), the roster,
// and lessons with their scores. since=0 is a full snapshot; a later cursor reads the change feed.
import type { Client } from '@libsql/client'

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
    let ids: { version: string[] | null, learner: string[] | null, lesson: string[] | null } = { version: null, learner: null, lesson: null }
    if (since > 0) {
      const rows = (await tx.execute({ sql: 'select seq, entity, entity_id from change_feed where organisation_id = ? and seq > ? order by seq limit ?', args: [organisationId, since, PAGE + 1] })).rows
      more = rows.length > PAGE
      const page = rows.slice(0, PAGE)
      cursor = page.length ? Number(page.at(-1)!.seq) : Math.max(since, 0)
      const of = (entity: string) => [...new Set(page.filter(r => r.entity === entity).map(r => r.entity_id as string))]
      ids = { version: of('version'), learner: of('learner'), lesson: of('lesson') }
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
    return { cursor, more, versions, removedVersions, learners, removedLearners, lessons }
  }
  finally {
    tx.close()
  }
}
