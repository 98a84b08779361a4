// The plan matrix of one organisation (GET /api/plan, /api/plan.csv): active learners × active jobs,
// the derived cells (trainingRows) and coverage. The filters are the server's: work area (jobs and
// learners of that area), one job, a learner's name or reference, and a status (learners with at least
// one cell in that status); then one page of the matching learners. Coverage always counts the whole
// active roster, so a name search or a page never makes a job look short of people.
// Deriving every cell of the roster is the costly part (coverage needs them all), so it is done once
// per change of the organisation's data and day (organisation-cache.ts: checked against a stamp read
// from the database on every request); filters and the page then run in memory on that.
import { coverageByJob, coverageByWorkArea, type JobCoverage } from '../../shared/utils/coverage'
import { localDay } from '../../shared/utils/training-status'
import type { PlanFilters } from '../../shared/schemas/plan'
import type { PlanCell, PlanJob, PlanLearner, PlanMatrix } from '../../shared/types/plan-matrix'

/** Everything the plan derives from one organisation's data on one day, whatever the filters. Shared by requests: never changed after it is built. */
interface PlanBase {
  /** active learners, by name */
  learners: readonly PlanLearner[]
  /** active jobs, grouped by work area (jobs without one last), then by title */
  jobs: readonly PlanJob[]
  areaNames: ReadonlyMap<string, string>
  /** each active learner's cells that are not "not needed", on active jobs, in column order */
  cellsByLearner: ReadonlyMap<string, readonly PlanCell[]>
  /** each active job's coverage over the whole active roster */
  coverage: ReadonlyMap<string, JobCoverage>
}

// A handful of organisations: one server usually serves one, and a miss only costs a build.
const planCache = organisationCache<PlanBase>(8)

/** Compares key lists in order, like SQL's ORDER BY with the BINARY collation. */
function byKeys(a: Array<string | number>, b: Array<string | number>): number {
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return a[i]! < b[i]! ? -1 : 1
  return 0
}

// Reads are two batches whatever the roster size: the roster and jobs here (as JSON text, cheaper in
// the client than a row object per row), the training facts in trainingRows.
async function loadPlanBase(organisationId: string, now: number): Promise<PlanBase> {
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
      sql: `select json_group_array(json_array(id, title, work_area_id, area, coverage_target, current)) as j from (
              select j.id, j.title, j.work_area_id, w.name as area, j.coverage_target,
                     (select max(v.number) from breakdown_versions v where v.job_id = j.id and v.organisation_id = j.organisation_id and v.status = 'published') as current
              from jobs j left join work_areas w on w.id = j.work_area_id and w.organisation_id = j.organisation_id
              where j.organisation_id = ? and j.archived_at is null)`,
      args: [organisationId],
    },
    { sql: 'select json_group_array(json_array(id, name)) as j from work_areas where organisation_id = ?', args: [organisationId] },
  ], 'read')
  const parse = (r: typeof learnerRes) => JSON.parse(String(r?.rows[0]?.j ?? '[]')) as unknown[][]
  // Sorted here: SQLite does not promise that an aggregate keeps a subquery's order.
  const learners: PlanLearner[] = (parse(learnerRes) as Array<[string, string, string, string | null, string | null]>)
    .map(([id, name, reference, workAreaId, workAreaName]) => Object.freeze({ id, name, reference, workAreaId, workAreaName }))
    .sort((a, b) => byKeys([a.name, a.id], [b.name, b.id]))
  const jobs: PlanJob[] = (parse(jobRes) as Array<[string, string, string | null, string | null, number, number | null]>)
    .map(([id, title, workAreaId, workAreaName, coverageTarget, current]) => Object.freeze({ id, title, workAreaId, workAreaName, coverageTarget: Number(coverageTarget), currentVersionNumber: current == null ? null : Number(current) }))
    .sort((a, b) => byKeys([a.workAreaName === null ? 1 : 0, a.workAreaName ?? '', a.title, a.id], [b.workAreaName === null ? 1 : 0, b.workAreaName ?? '', b.title, b.id]))
  const areaNames = new Map((parse(areaRes) as Array<[string, string]>).map(([id, name]) => [id, name]))

  // Every cell of every active job for every active learner: coverage needs the whole roster.
  const column = new Map(jobs.map((j, i) => [j.id, i]))
  const cellsByLearner = new Map<string, PlanCell[]>(learners.map(l => [l.id, []]))
  const counted: Array<{ jobId: string, status: PlanCell['status'] }> = []
  for (const row of jobs.length ? await trainingRows(organisationId, {}, now) : []) {
    const cells = cellsByLearner.get(row.learnerId)
    if (!cells || !column.has(row.jobId)) continue
    counted.push(row)
    if (row.status !== 'not-needed') cells.push(Object.freeze(toPlanCell(row.learnerId, row.jobId, row)))
  }
  for (const cells of cellsByLearner.values()) cells.sort((a, b) => column.get(a.jobId)! - column.get(b.jobId)!)
  const coverage = coverageByJob(jobs.map(j => ({ jobId: j.id, workAreaId: j.workAreaId, needed: j.coverageTarget })), counted)
  return { learners, jobs, areaNames, cellsByLearner, coverage: new Map(coverage.map(c => [c.jobId, Object.freeze(c)])) }
}

const NO_CELLS: readonly PlanCell[] = Object.freeze([])

export async function planMatrix(organisationId: string, query: PlanFilters, now: number = Date.now()): Promise<PlanMatrix> {
  const base = await planCache.get(organisationId, now, () => loadPlanBase(organisationId, now))

  const inArea = (workAreaId: string | null) => query.workAreaId === undefined || (query.workAreaId === 'none' ? workAreaId === null : workAreaId === query.workAreaId)
  const jobs = base.jobs.filter(j => inArea(j.workAreaId) && (!query.jobId || j.id === query.jobId))
  const shownJobs = jobs.length === base.jobs.length ? null : new Set(jobs.map(j => j.id))
  const cellsOf = (learnerId: string) => {
    const cells = base.cellsByLearner.get(learnerId) ?? NO_CELLS
    return shownJobs ? cells.filter(c => shownJobs.has(c.jobId)) : cells
  }
  const needle = query.q?.toLowerCase()
  let learners = base.learners.filter(l => inArea(l.workAreaId) && (!needle || l.name.toLowerCase().includes(needle) || l.reference.toLowerCase().includes(needle)))
  const status = query.status
  if (status === 'not-needed') {
    // Learners with at least one shown job they have nothing for.
    learners = learners.filter(l => cellsOf(l.id).length < jobs.length)
  }
  else if (status) {
    learners = learners.filter(l => cellsOf(l.id).some(c => c.status === status))
  }

  const coverageJobs = jobs.map(j => base.coverage.get(j.id)!)
  const coverageAreas = coverageByWorkArea(coverageJobs).map(a => ({ ...a, name: a.workAreaId ? base.areaNames.get(a.workAreaId) ?? 'Work area' : 'No work area' }))

  const offset = query.offset ?? 0
  const limit = query.limit ?? Number.POSITIVE_INFINITY
  const page = learners.slice(offset, offset + limit)

  return {
    today: localDay(now),
    learners: page,
    jobs,
    cells: page.flatMap(l => cellsOf(l.id)),
    coverage: { jobs: coverageJobs, workAreas: coverageAreas },
    totals: { learners: base.learners.length, jobs: base.jobs.length },
    page: { offset, limit: Number.isFinite(limit) ? limit : learners.length, matching: learners.length },
  }
}
