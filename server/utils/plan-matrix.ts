// The plan matrix of one organisation (GET /api/plan, /api/plan.csv): active learners × active jobs,
// the derived cells (trainingRows) and coverage. Filters are applied here, on the server:
// work area (jobs and learners of that area), one job, a learner's name or reference, and a status
// (learners with at least one cell in that status). Coverage always counts the whole active roster,
// so a name search never makes a job look short of people.
import { and, asc, eq, isNull, sql, type SQL } from 'drizzle-orm'
import { breakdownVersions, jobs, learners, workAreas } from '../db/schema'
import { coverageByJob, coverageByWorkArea } from '../../shared/utils/coverage'
import { localDay } from '../../shared/utils/training-status'
import type { PlanQuery } from '../../shared/schemas/plan'
import type { PlanCell, PlanMatrix } from '../../shared/types/plan-matrix'

export async function planMatrix(organisationId: string, query: PlanQuery, now: number = Date.now()): Promise<PlanMatrix> {
  const db = await useDb()
  const areaOf = (column: typeof jobs.workAreaId | typeof learners.workAreaId): SQL | undefined =>
    query.workAreaId === undefined ? undefined : query.workAreaId === 'none' ? isNull(column) : eq(column, query.workAreaId)

  const [jobRows, learnerRows, areaRows, activeRows, activeJobs, published] = await Promise.all([
    db.select({ id: jobs.id, title: jobs.title, workAreaId: jobs.workAreaId, workAreaName: workAreas.name, coverageTarget: jobs.coverageTarget })
      .from(jobs)
      .leftJoin(workAreas, and(eq(workAreas.id, jobs.workAreaId), eq(workAreas.organisationId, organisationId)))
      .where(and(eq(jobs.organisationId, organisationId), isNull(jobs.archivedAt), areaOf(jobs.workAreaId), query.jobId ? eq(jobs.id, query.jobId) : undefined))
      // Columns grouped by work area (jobs without one last), then by title.
      .orderBy(sql`${workAreas.name} is null`, asc(workAreas.name), asc(jobs.title)),
    db.select({ id: learners.id, name: learners.name, reference: learners.reference, workAreaId: learners.workAreaId, workAreaName: workAreas.name })
      .from(learners)
      .leftJoin(workAreas, and(eq(workAreas.id, learners.workAreaId), eq(workAreas.organisationId, organisationId)))
      .where(and(
        eq(learners.organisationId, organisationId),
        isNull(learners.archivedAt),
        areaOf(learners.workAreaId),
        query.q ? sql`(instr(lower(${learners.name}), ${query.q.toLowerCase()}) > 0 or instr(lower(${learners.reference}), ${query.q.toLowerCase()}) > 0)` : undefined,
      ))
      .orderBy(asc(learners.name)),
    db.select({ id: workAreas.id, name: workAreas.name }).from(workAreas).where(eq(workAreas.organisationId, organisationId)),
    db.select({ id: learners.id }).from(learners).where(and(eq(learners.organisationId, organisationId), isNull(learners.archivedAt))),
    db.$count(jobs, and(eq(jobs.organisationId, organisationId), isNull(jobs.archivedAt))),
    db.select({ jobId: breakdownVersions.jobId, number: sql<number>`max(${breakdownVersions.number})` }).from(breakdownVersions)
      .where(and(eq(breakdownVersions.organisationId, organisationId), eq(breakdownVersions.status, 'published')))
      .groupBy(breakdownVersions.jobId),
  ])

  // Every cell of the shown jobs, for every active learner: coverage needs the whole roster.
  const activeLearners = new Set(activeRows.map(r => r.id))
  const rows = jobRows.length ? (await trainingRows(organisationId, { jobIds: jobRows.map(j => j.id) }, now)).filter(r => activeLearners.has(r.learnerId)) : []

  const currentOf = new Map(published.map(v => [v.jobId, Number(v.number)]))
  const coverageJobs = coverageByJob(jobRows.map(j => ({ jobId: j.id, workAreaId: j.workAreaId, needed: j.coverageTarget })), rows)
  const areaNames = new Map(areaRows.map(a => [a.id, a.name]))
  const coverageAreas = coverageByWorkArea(coverageJobs).map(a => ({ ...a, name: a.workAreaId ? areaNames.get(a.workAreaId) ?? 'Work area' : 'No work area' }))

  const shownLearners = new Set(learnerRows.map(l => l.id))
  let cells: PlanCell[] = rows.filter(r => shownLearners.has(r.learnerId) && r.status !== 'not-needed').map(r => toPlanCell(r.learnerId, r.jobId, r))

  let shown = learnerRows
  if (query.status) {
    const status = query.status
    if (status === 'not-needed') {
      // Learners with at least one shown job they have nothing for.
      const filled = new Map<string, number>()
      for (const c of cells) filled.set(c.learnerId, (filled.get(c.learnerId) ?? 0) + 1)
      shown = learnerRows.filter(l => (filled.get(l.id) ?? 0) < jobRows.length)
    }
    else {
      const having = new Set(cells.filter(c => c.status === status).map(c => c.learnerId))
      shown = learnerRows.filter(l => having.has(l.id))
    }
    const keep = new Set(shown.map(l => l.id))
    cells = cells.filter(c => keep.has(c.learnerId))
  }

  return {
    today: localDay(now),
    learners: shown,
    jobs: jobRows.map(j => ({ ...j, currentVersionNumber: currentOf.get(j.id) ?? null })),
    cells,
    coverage: { jobs: coverageJobs, workAreas: coverageAreas },
    totals: { learners: activeLearners.size, jobs: activeJobs },
  }
}
