// The plan matrix of one organisation (GET /api/plan, /api/plan.csv): active learners × active jobs,
// the derived cells (trainingRows) and coverage. The filters are the server's: work area (jobs and
// learners of that area), one job, a learner's name or reference, and a status (learners with at least
// one cell in that status); then one page of the matching learners. Coverage always counts the whole
// active roster, so a name search or a page never makes a job look short of people.
// Reads are two batches whatever the roster size: the roster and jobs here (as JSON text, cheaper in the
// client than a row object per row), the training facts in trainingRows.
import { coverageByJob, coverageByWorkArea } from '../../shared/utils/coverage'
import { localDay } from '../../shared/utils/training-status'
import type { PlanFilters } from '../../shared/schemas/plan'
import type { PlanCell, PlanJob, PlanLearner, PlanMatrix } from '../../shared/types/plan-matrix'

/** Compares key lists in order, like SQL's ORDER BY with the BINARY collation. */
function byKeys(a: Array<string | number>, b: Array<string | number>): number {
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return a[i]! < b[i]! ? -1 : 1
  return 0
}

export async function planMatrix(organisationId: string, query: PlanFilters, now: number = Date.now()): Promise<PlanMatrix> {
  const db = await useDb()
  const [learnerRes, jobRes, areaRes] = await db.$client.batch([
    {
      sql: `select json_group_array(json_array(le.id, le.name, le.reference, le.work_area_id, w.name)) as j from (
              select le.id, le.name, le.reference, le.work_area_id from learners le
              where le.organisation_id = ? and le.archived_at is null order by le.name, le.id) le
            left join work_areas w on w.id = le.work_area_id and w.organisation_id = ?`,
      args: [organisationId, organisationId],
    },
    {
      // Columns grouped by work area (jobs without one last), then by title.
      sql: `select json_group_array(json_array(id, title, work_area_id, area, coverage_target, current)) as j from (
              select j.id, j.title, j.work_area_id, w.name as area, j.coverage_target,
                     (select max(v.number) from breakdown_versions v where v.job_id = j.id and v.organisation_id = j.organisation_id and v.status = 'published') as current
              from jobs j left join work_areas w on w.id = j.work_area_id and w.organisation_id = j.organisation_id
              where j.organisation_id = ? and j.archived_at is null
              order by w.name is null, w.name, j.title, j.id)`,
      args: [organisationId],
    },
    { sql: 'select json_group_array(json_array(id, name)) as j from work_areas where organisation_id = ?', args: [organisationId] },
  ], 'read')
  const parse = (r: typeof learnerRes) => JSON.parse(String(r?.rows[0]?.j ?? '[]')) as unknown[][]
  // Sorted here as well: SQLite does not promise that an aggregate keeps a subquery's order.
  const allLearners: PlanLearner[] = (parse(learnerRes) as Array<[string, string, string, string | null, string | null]>)
    .map(([id, name, reference, workAreaId, workAreaName]) => ({ id, name, reference, workAreaId, workAreaName }))
    .sort((a, b) => byKeys([a.name, a.id], [b.name, b.id]))
  const allJobs: PlanJob[] = (parse(jobRes) as Array<[string, string, string | null, string | null, number, number | null]>)
    .map(([id, title, workAreaId, workAreaName, coverageTarget, current]) => ({ id, title, workAreaId, workAreaName, coverageTarget: Number(coverageTarget), currentVersionNumber: current == null ? null : Number(current) }))
    .sort((a, b) => byKeys([a.workAreaName === null ? 1 : 0, a.workAreaName ?? '', a.title, a.id], [b.workAreaName === null ? 1 : 0, b.workAreaName ?? '', b.title, b.id]))
  const areaNames = new Map((parse(areaRes) as Array<[string, string]>).map(([id, name]) => [id, name]))

  const inArea = (workAreaId: string | null) => query.workAreaId === undefined || (query.workAreaId === 'none' ? workAreaId === null : workAreaId === query.workAreaId)
  const jobs = allJobs.filter(j => inArea(j.workAreaId) && (!query.jobId || j.id === query.jobId))
  const needle = query.q?.toLowerCase()
  let learners = allLearners.filter(l => inArea(l.workAreaId) && (!needle || l.name.toLowerCase().includes(needle) || l.reference.toLowerCase().includes(needle)))

  // Every cell of the shown jobs, for every active learner: coverage needs the whole roster.
  const active = new Set(allLearners.map(l => l.id))
  // All jobs shown: no id list to bind (the archived jobs' rows are dropped below with the rest).
  const shownJobs = new Set(jobs.map(j => j.id))
  const rows = jobs.length
    ? (await trainingRows(organisationId, jobs.length === allJobs.length ? {} : { jobIds: [...shownJobs] }, now)).filter(r => active.has(r.learnerId) && shownJobs.has(r.jobId))
    : []
  const coverageJobs = coverageByJob(jobs.map(j => ({ jobId: j.id, workAreaId: j.workAreaId, needed: j.coverageTarget })), rows)
  const coverageAreas = coverageByWorkArea(coverageJobs).map(a => ({ ...a, name: a.workAreaId ? areaNames.get(a.workAreaId) ?? 'Work area' : 'No work area' }))

  const filled = rows.filter(r => r.status !== 'not-needed')
  if (query.status) {
    const status = query.status
    if (status === 'not-needed') {
      // Learners with at least one shown job they have nothing for.
      const count = new Map<string, number>()
      for (const r of filled) count.set(r.learnerId, (count.get(r.learnerId) ?? 0) + 1)
      learners = learners.filter(l => (count.get(l.id) ?? 0) < jobs.length)
    }
    else {
      const having = new Set(filled.filter(r => r.status === status).map(r => r.learnerId))
      learners = learners.filter(l => having.has(l.id))
    }
  }

  const offset = query.offset ?? 0
  const limit = query.limit ?? Number.POSITIVE_INFINITY
  const page = learners.slice(offset, offset + limit)
  const shown = new Set(page.map(l => l.id))
  const cells: PlanCell[] = filled.filter(r => shown.has(r.learnerId)).map(r => toPlanCell(r.learnerId, r.jobId, r))

  return {
    today: localDay(now),
    learners: page,
    jobs,
    cells,
    coverage: { jobs: coverageJobs, workAreas: coverageAreas },
    totals: { learners: allLearners.length, jobs: allJobs.length },
    page: { offset, limit: Number.isFinite(limit) ? limit : learners.length, matching: learners.length },
  }
}
