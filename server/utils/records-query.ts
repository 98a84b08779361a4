// Every lesson and spot check of an organisation as one list, filtered, sorted and paged in SQL
// (GET /api/records and its CSV). Both arms of the union filter by organisation first, so the
// organisation indexes (lessons_org_idx, spot_checks_org_idx, lessons_learner_idx,
// spot_checks_learner_job_idx) carry the query; the page is cut with LIMIT/OFFSET and the total
// is a count over the same filters. Newest first (the page's first view) reads both arms in the
// order of lessons_org_started_idx / spot_checks_org_started_idx (organisation, started_at, id), so
// SQLite merges them and stops after the page instead of sorting every record (0.6 ms instead of 1.1
// for the page on the benchmark organisation).
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

interface Built { sql: string, args: InValue[] }

/**
 * The union of lessons and checks as narrow rows (what filtering and sorting need), each arm
 * narrowed by the filters it can apply itself; the version filter by the organisation's version ids.
 * `forCount`: each row is only a 1 (the total reads no column the filters do not need; about half
 * the count's time on the benchmark organisation).
 */
function unionOf(organisationId: string, filter: RecordsFilter, forCount = false): Built {
  const { start, end } = recordsDayRange(filter)
  const arm = (table: 'l' | 'c') => {
    const conditions: Array<[string, InValue | null | undefined]> = [
      ['organisation_id = ?', organisationId],
      ['learner_id = ?', filter.learnerId],
      ['job_id = ?', filter.jobId],
      ['coach_user_id = ?', filter.coachUserId],
      ['started_at >= ?', start],
      ['started_at < ?', end],
    ]
    const used = conditions.filter(([, value]) => value !== undefined && value !== null)
    const where = used.map(([text]) => `${table}.${text}`)
    const args = used.map(([, value]) => value as InValue)
    if (filter.version !== undefined) {
      where.push(`${table}.version_id in (select id from breakdown_versions where organisation_id = ? and number = ?)`)
      args.push(organisationId, filter.version)
    }
    return { where: where.join(' and '), args }
  }
  const parts: string[] = []
  const args: InValue[] = []
  const outcome = filter.outcome
  const lessonOutcomes: RecordOutcome[] = ['ready', 'another-pass', 'open']
  const checkOutcomes: RecordOutcome[] = ['clean', 'stay', 'reteach', 'open']
  if (filter.kind !== 'check' && (!outcome || lessonOutcomes.includes(outcome))) {
    const a = arm('l')
    // A lesson is "open" until it is signed off with a decision.
    const outcomeSql = 'case when l.signed_off_at is null or l.decision is null then \'open\' else l.decision end'
    parts.push(`select ${forCount ? '1' : `'lesson' as kind, l.id, l.started_at as date, l.signed_off_at as finished_at, l.learner_id, l.job_id, l.version_id, l.coach_user_id, ${outcomeSql} as outcome`}
      from lessons l where ${a.where}${outcome ? ` and ${outcomeSql} = ?` : ''}`)
    args.push(...a.args, ...(outcome ? [outcome] : []))
  }
  if (filter.kind !== 'lesson' && (!outcome || checkOutcomes.includes(outcome))) {
    const a = arm('c')
    const outcomeSql = 'case when c.finished_at is null or c.outcome is null then \'open\' else c.outcome end'
    parts.push(`select ${forCount ? '1' : `'check' as kind, c.id, c.started_at as date, c.finished_at as finished_at, c.learner_id, c.job_id, c.version_id, c.coach_user_id, ${outcomeSql} as outcome`}
      from spot_checks c where ${a.where}${outcome ? ` and ${outcomeSql} = ?` : ''}`)
    args.push(...a.args, ...(outcome ? [outcome] : []))
  }
  // Lessons only with a check outcome (or the other way round): an empty list, still one statement.
  if (!parts.length && forCount) parts.push('select 1 where 0')
  if (!parts.length) parts.push('select null as kind, null as id, null as date, null as finished_at, null as learner_id, null as job_id, null as version_id, null as coach_user_id, null as outcome where 0')
  return { sql: parts.join('\nunion all\n'), args }
}

// Sorting happens on the narrow rows, before any join: the person's and job's names are looked up
// by primary key for the sort key only. `r` is the narrow row, in the page query and in the outer one.
const NAME_OF = { person: '(select name from learners where id = r.learner_id)', job: '(select title from jobs where id = r.job_id)' }
const ORDER: Record<RecordsFilter['sort'], (dir: 'asc' | 'desc') => string> = {
  date: dir => `r.date ${dir}, r.id ${dir}`,
  person: dir => `${NAME_OF.person} collate nocase ${dir}, r.learner_id ${dir}, r.date desc, r.id desc`,
  job: dir => `${NAME_OF.job} collate nocase ${dir}, r.job_id ${dir}, r.date desc, r.id desc`,
}

type Runner = { execute: (stmt: { sql: string, args: InValue[] }) => Promise<{ rows: ArrayLike<Record<string, unknown>> }> }

const num = (v: unknown) => (v === null || v === undefined ? null : Number(v))

/**
 * The records of one page (or of the whole export): the narrow rows are filtered, sorted and cut
 * first, then only those rows are joined for names, scores and acknowledgements. The joins repeat
 * the organisation, so a row can never pick up another organisation's name. CROSS JOIN keeps the
 * page as the outer loop (SQLite never reorders it): with plain joins the planner walked the
 * organisation's learners × jobs × versions and probed the records through an automatic index
 * (about 400 ms instead of a few on the bench organisation, npm run bench:plan).
 */
function pageQuery(organisationId: string, filter: RecordsFilter, limit: number, offset: number): Built {
  const union = unionOf(organisationId, filter)
  const dir = filter.dir ?? (filter.sort === 'date' ? 'desc' : 'asc')
  const order = ORDER[filter.sort](dir)
  // The page comes back as one JSON text (json_group_array) rather than a row object per row, which
  // the client builds at several times the cost; the aggregate's own ORDER BY (SQLite 3.44+) keeps
  // the order, since SQLite does not promise that an aggregate keeps its subquery's order (a
  // row_number() window did the same at half the statement's time).
  return {
    sql: `select json_group_array(json_array(${JSON_COLUMNS.map(([, expr]) => expr).join(', ')}) order by ${order}) as j
      from (select r.* from (${union.sql}) r order by ${order} limit ? offset ?) r
      cross join learners le on le.id = r.learner_id
      cross join jobs j on j.id = r.job_id
      cross join breakdown_versions v on v.id = r.version_id
      left join users u on u.id = r.coach_user_id
      left join work_areas wa on wa.id = le.work_area_id
      left join lessons l on r.kind = 'lesson' and l.id = r.id
      left join lesson_scores s on r.kind = 'lesson' and s.lesson_id = r.id
      left join spot_checks c on r.kind = 'check' and c.id = r.id
      where le.organisation_id = ? and j.organisation_id = ? and v.organisation_id = ?`,
    args: [...union.args, limit, offset, organisationId, organisationId, organisationId],
  }
}

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

function rowsOf(result: { rows: ArrayLike<Record<string, unknown>> }): RecordRow[] {
  const list = JSON.parse(String(result.rows[0]?.j ?? '[]')) as unknown[][]
  // Read by place rather than through an object per row built first (about 0.1 ms of 0.3 ms of JavaScript per page).
  return list.map(toRow)
}

/** One page of records and the number matching the filters, in one statement. */
export async function recordsPage(client: Runner, organisationId: string, filter: RecordsFilter, page: { limit: number, offset: number }) {
  const union = unionOf(organisationId, filter, true)
  const list = pageQuery(organisationId, filter, page.limit, page.offset)
  const result = await client.execute({ sql: `select (select count(*) from (${union.sql})) as n, (${list.sql}) as j`, args: [...union.args, ...list.args] })
  return { total: Number(result.rows[0]?.n ?? 0), limit: page.limit, offset: page.offset, rows: rowsOf(result) }
}

/** Every record matching the filters, in the chosen order, at most `max` (the CSV export). */
export async function allRecords(client: Runner, organisationId: string, filter: RecordsFilter, max: number) {
  const rows = rowsOf(await client.execute(pageQuery(organisationId, filter, max + 1, 0)))
  return { rows: rows.slice(0, max), truncated: rows.length > max }
}
