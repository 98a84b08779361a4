// Every lesson and spot check of an organisation as records, read in one statement (the whole list
// behind GET /api/records and its CSV; records-cache.ts keeps it per organisation and records-list.ts
// filters, sorts and pages it per request). Both arms of the union filter by organisation first, on
// the organisation indexes (lessons_org_started_idx, spot_checks_org_started_idx), and every join
// repeats the organisation, so a record can never pick up another organisation's name.
import type { InValue } from '@libsql/client'
import type { RecordKind, RecordOutcome, RecordRow, RecordsFilter } from '../../shared/schemas/records'

const DAY_MS = 86_400_000

/** The filter's calendar days as [start, end) in UTC ms, from the person's own time zone offset. */
export function recordsDayRange(filter: Pick<RecordsFilter, 'from' | 'to' | 'tzOffset'>): { start: number | null, end: number | null } {
  const offset = filter.tzOffset * 60_000
  return {
    start: filter.from ? Date.parse(`${filter.from}T00:00:00Z`) + offset : null,
    end: filter.to ? Date.parse(`${filter.to}T00:00:00Z`) + DAY_MS + offset : null,
  }
}

type Runner = { execute: (stmt: { sql: string, args: InValue[] }) => Promise<{ rows: ArrayLike<Record<string, unknown>> }> }

const num = (v: unknown) => (v === null || v === undefined ? null : Number(v))

const JSON_COLUMNS: Array<[string, string]> = [
  ['kind', 'r.kind'], ['id', 'r.id'], ['date', 'r.date'], ['finished_at', 'r.finished_at'], ['learner_id', 'r.learner_id'],
  ['job_id', 'r.job_id'], ['version_id', 'r.version_id'], ['coach_user_id', 'r.coach_user_id'], ['outcome', 'r.outcome'],
  ['learner_name', 'le.name'], ['learner_reference', 'le.reference'], ['work_area_name', 'wa.name'], ['job_title', 'j.title'],
  ['version_number', 'v.number'], ['coach_name', 'u.name'], ['readiness', 's.readiness'], ['recall', 's.recall'],
  ['ack_name', 'json_extract(l.acknowledgement, \'$.name\')'], ['ack_at', 'json_extract(l.acknowledgement, \'$.at\')'],
  ['place', 'coalesce(l.place, \'\')'], ['elements', 'case when r.kind = \'check\' then json_array_length(c.elements) end'],
]

/** Each column's place in a JSON row. */
const AT = Object.fromEntries(JSON_COLUMNS.map(([name], i) => [name, i])) as Record<string, number>

/** One record from its JSON row (values in JSON_COLUMNS order). */
function toRow(v: unknown[]): RecordRow {
  const r = (name: string) => v[AT[name]!]
  return {
    kind: r('kind') as RecordKind,
    id: r('id') as string,
    date: Number(r('date')),
    finishedAt: num(r('finished_at')),
    learnerId: r('learner_id') as string,
    learnerName: r('learner_name') as string,
    learnerReference: (r('learner_reference') as string | null) ?? '',
    workAreaName: (r('work_area_name') as string | null) ?? null,
    jobId: r('job_id') as string,
    jobTitle: r('job_title') as string,
    versionId: r('version_id') as string,
    versionNumber: Number(r('version_number')),
    coachUserId: (r('coach_user_id') as string | null) ?? null,
    coachName: (r('coach_name') as string | null) ?? null,
    outcome: r('outcome') as RecordOutcome,
    readiness: (r('readiness') as RecordRow['readiness']) ?? null,
    recall: num(r('recall')),
    acknowledgedBy: (r('ack_name') as string | null) ?? null,
    acknowledgedAt: num(r('ack_at')),
    place: (r('place') as string | null) ?? '',
    elements: num(r('elements')),
  }
}

// A lesson is "open" until it is signed off with a decision; a check until it has finished with an outcome.
const LESSON_OUTCOME = 'case when l.signed_off_at is null or l.decision is null then \'open\' else l.decision end'
const CHECK_OUTCOME = 'case when c.finished_at is null or c.outcome is null then \'open\' else c.outcome end'

/**
 * The narrow rows of both kinds first, then each joined by primary key for names, scores and
 * acknowledgements. CROSS JOIN keeps the records as the outer loop (SQLite never reorders it): with
 * plain joins the planner walked the organisation's learners × jobs × versions and probed the records
 * through an automatic index (about 400 ms instead of a few on the bench organisation). The list comes
 * back as one JSON text (json_group_array), which the client reads several times faster than a row
 * object per row; the aggregate's own ORDER BY (SQLite 3.44+) gives newest first, since SQLite does
 * not promise that an aggregate keeps a subquery's order.
 */
const ALL_RECORDS_SQL = `select json_group_array(json_array(${JSON_COLUMNS.map(([, expr]) => expr).join(', ')}) order by r.date desc, r.id desc) as j
  from (
    select 'lesson' as kind, l.id, l.started_at as date, l.signed_off_at as finished_at, l.learner_id, l.job_id, l.version_id, l.coach_user_id, ${LESSON_OUTCOME} as outcome
      from lessons l where l.organisation_id = ?1
    union all
    select 'check' as kind, c.id, c.started_at as date, c.finished_at as finished_at, c.learner_id, c.job_id, c.version_id, c.coach_user_id, ${CHECK_OUTCOME} as outcome
      from spot_checks c where c.organisation_id = ?1
  ) r
  cross join learners le on le.id = r.learner_id
  cross join jobs j on j.id = r.job_id
  cross join breakdown_versions v on v.id = r.version_id
  left join users u on u.id = r.coach_user_id
  left join work_areas wa on wa.id = le.work_area_id
  left join lessons l on r.kind = 'lesson' and l.id = r.id
  left join lesson_scores s on r.kind = 'lesson' and s.lesson_id = r.id
  left join spot_checks c on r.kind = 'check' and c.id = r.id
  where le.organisation_id = ?1 and j.organisation_id = ?1 and v.organisation_id = ?1`

/** Every record of the organisation, newest first (started_at, then id, both descending). */
export async function loadOrganisationRecords(client: Runner, organisationId: string): Promise<RecordRow[]> {
  const result = await client.execute({ sql: ALL_RECORDS_SQL, args: [organisationId] })
  const list = JSON.parse(String(result.rows[0]?.j ?? '[]')) as unknown[][]
  // Read by place rather than through an object per row built first.
  return list.map(toRow)
}
