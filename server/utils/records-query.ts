// Every lesson and spot check of an organisation as one list, filtered, sorted and paged in SQL
// (GET /api/records and its CSV). Both arms of the union filter by organisation first, so the
// organisation indexes (lessons_org_idx, spot_checks_org_idx, lessons_learner_idx,
// spot_checks_learner_job_idx) carry the query; the page is cut with LIMIT/OFFSET and the total
// is a count over the same filters.
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

/** The union of lessons and checks, each arm narrowed by the filters it can apply itself. */
function unionOf(organisationId: string, filter: RecordsFilter): Built {
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
    return { where: used.map(([text]) => `${table}.${text}`).join(' and '), args: used.map(([, value]) => value as InValue) }
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
    parts.push(`select 'lesson' as kind, l.id, l.started_at as date, l.signed_off_at as finished_at, l.learner_id, l.job_id, l.version_id, l.coach_user_id,
        ${outcomeSql} as outcome, s.readiness, s.recall,
        json_extract(l.acknowledgement, '$.name') as ack_name, json_extract(l.acknowledgement, '$.at') as ack_at, l.place, null as elements
      from lessons l left join lesson_scores s on s.lesson_id = l.id and s.organisation_id = l.organisation_id
      where ${a.where}${outcome ? ` and ${outcomeSql} = ?` : ''}`)
    args.push(...a.args, ...(outcome ? [outcome] : []))
  }
  if (filter.kind !== 'lesson' && (!outcome || checkOutcomes.includes(outcome))) {
    const a = arm('c')
    const outcomeSql = 'case when c.finished_at is null or c.outcome is null then \'open\' else c.outcome end'
    parts.push(`select 'check' as kind, c.id, c.started_at as date, c.finished_at as finished_at, c.learner_id, c.job_id, c.version_id, c.coach_user_id,
        ${outcomeSql} as outcome, null as readiness, null as recall, null as ack_name, null as ack_at, '' as place, json_array_length(c.elements) as elements
      from spot_checks c
      where ${a.where}${outcome ? ` and ${outcomeSql} = ?` : ''}`)
    args.push(...a.args, ...(outcome ? [outcome] : []))
  }
  // Lessons only with a check outcome (or the other way round): an empty list, still one statement.
  if (!parts.length) parts.push('select null as kind, null as id, null as date, null as finished_at, null as learner_id, null as job_id, null as version_id, null as coach_user_id, null as outcome, null as readiness, null as recall, null as ack_name, null as ack_at, null as place, null as elements where 0')
  return { sql: parts.join('\nunion all\n'), args }
}

const ORDER: Record<RecordsFilter['sort'], (dir: 'asc' | 'desc') => string> = {
  date: dir => `r.date ${dir}, r.id ${dir}`,
  person: dir => `le.name collate nocase ${dir}, le.id ${dir}, r.date desc, r.id desc`,
  job: dir => `j.title collate nocase ${dir}, j.id ${dir}, r.date desc, r.id desc`,
}

/** The joined, filtered records; the caller adds order, limit or count. */
function joined(organisationId: string, filter: RecordsFilter): Built {
  const union = unionOf(organisationId, filter)
  const args = [...union.args]
  // The joins repeat the organisation so a row can never pick up another organisation's name.
  let where = 'le.organisation_id = ? and j.organisation_id = ? and v.organisation_id = ?'
  args.push(organisationId, organisationId, organisationId)
  if (filter.version !== undefined) {
    where += ' and v.number = ?'
    args.push(filter.version)
  }
  return {
    sql: `from (${union.sql}) r
      join learners le on le.id = r.learner_id
      join jobs j on j.id = r.job_id
      join breakdown_versions v on v.id = r.version_id
      left join users u on u.id = r.coach_user_id
      left join work_areas wa on wa.id = le.work_area_id
      where ${where}`,
    args,
  }
}

type Runner = { execute: (stmt: { sql: string, args: InValue[] }) => Promise<{ rows: ArrayLike<Record<string, unknown>> }> }

function toRow(r: Record<string, unknown>): RecordRow {
  const num = (v: unknown) => (v === null || v === undefined ? null : Number(v))
  return {
    kind: r.kind as RecordKind,
    id: r.id as string,
    date: Number(r.date),
    finishedAt: num(r.finished_at),
    learnerId: r.learner_id as string,
    learnerName: r.learner_name as string,
    learnerReference: (r.learner_reference as string | null) ?? '',
    workAreaName: (r.work_area_name as string | null) ?? null,
    jobId: r.job_id as string,
    jobTitle: r.job_title as string,
    versionId: r.version_id as string,
    versionNumber: Number(r.version_number),
    coachUserId: (r.coach_user_id as string | null) ?? null,
    coachName: (r.coach_name as string | null) ?? null,
    outcome: r.outcome as RecordOutcome,
    readiness: (r.readiness as RecordRow['readiness']) ?? null,
    recall: num(r.recall),
    acknowledgedBy: (r.ack_name as string | null) ?? null,
    acknowledgedAt: num(r.ack_at),
    place: (r.place as string | null) ?? '',
    elements: num(r.elements),
  }
}

const COLUMNS = `r.kind, r.id, r.date, r.finished_at, r.learner_id, r.job_id, r.version_id, r.coach_user_id, r.outcome, r.readiness, r.recall,
  r.ack_name, r.ack_at, r.place, r.elements, le.name as learner_name, le.reference as learner_reference, wa.name as work_area_name,
  j.title as job_title, v.number as version_number, u.name as coach_name`

/** One page of records and the number matching the filters. */
export async function recordsPage(client: Runner, organisationId: string, filter: RecordsFilter, page: { limit: number, offset: number }) {
  const base = joined(organisationId, filter)
  const dir = filter.dir ?? (filter.sort === 'date' ? 'desc' : 'asc')
  const [list, count] = await Promise.all([
    client.execute({ sql: `select ${COLUMNS} ${base.sql} order by ${ORDER[filter.sort](dir)} limit ? offset ?`, args: [...base.args, page.limit, page.offset] }),
    client.execute({ sql: `select count(*) as n ${base.sql}`, args: base.args }),
  ])
  return { total: Number(count.rows[0]?.n ?? 0), limit: page.limit, offset: page.offset, rows: Array.from(list.rows, toRow) }
}

/** Every record matching the filters, in the chosen order, at most `max` (the CSV export). */
export async function allRecords(client: Runner, organisationId: string, filter: RecordsFilter, max: number) {
  const base = joined(organisationId, filter)
  const dir = filter.dir ?? (filter.sort === 'date' ? 'desc' : 'asc')
  const list = await client.execute({ sql: `select ${COLUMNS} ${base.sql} order by ${ORDER[filter.sort](dir)} limit ?`, args: [...base.args, max + 1] })
  const rows = Array.from(list.rows, toRow)
  return { rows: rows.slice(0, max), truncated: rows.length > max }
}
