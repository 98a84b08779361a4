// Jobs scoped to the caller's organisation: loading one, checking its work area, listing its versions.
import { and, desc, eq, inArray, ne } from 'drizzle-orm'
import { breakdownVersions, jobs, users, workAreas, type Job } from '../db/schema'

type Reader = Pick<Db, 'select'>

/** The job with its work area's name, or undefined when the id is not a job of this organisation. */
export async function findJob(db: Reader, organisationId: string, id: string) {
  const [row] = await db.select({ job: jobs, workAreaName: workAreas.name })
    .from(jobs)
    .leftJoin(workAreas, and(eq(workAreas.id, jobs.workAreaId), eq(workAreas.organisationId, organisationId)))
    .where(and(eq(jobs.id, id), eq(jobs.organisationId, organisationId)))
    .limit(1)
  return row ? { ...jobView(row.job), workAreaName: row.workAreaName ?? null } : undefined
}

/** A job row as the API answers it: everything but the organisation, which is always the caller's. */
export function jobView(job: Job) {
  const { organisationId: _org, ...fields } = job
  return fields
}

/** A job's versions, newest first. Learners never see drafts. */
export async function jobVersions(db: Reader, organisationId: string, jobId: string, options: { drafts: boolean }) {
  return db.select({
    id: breakdownVersions.id,
    number: breakdownVersions.number,
    status: breakdownVersions.status,
    changeNote: breakdownVersions.changeNote,
    publishedAt: breakdownVersions.publishedAt,
    publishedByName: users.name,
    retiredAt: breakdownVersions.retiredAt,
    createdAt: breakdownVersions.createdAt,
    updatedAt: breakdownVersions.updatedAt,
  }).from(breakdownVersions)
    .leftJoin(users, eq(users.id, breakdownVersions.publishedBy))
    .where(and(
      eq(breakdownVersions.organisationId, organisationId),
      eq(breakdownVersions.jobId, jobId),
      options.drafts ? undefined : ne(breakdownVersions.status, 'draft'),
    ))
    .orderBy(desc(breakdownVersions.number))
}

/** The published and draft version of each job, for the jobs list. */
export async function currentVersionsOf(db: Reader, organisationId: string, jobIds: string[]) {
  const published = new Map<string, { id: string, number: number, publishedAt: Date | null }>()
  const drafts = new Map<string, { id: string, number: number, revision: number, updatedAt: Date }>()
  // Chunked: SQLite binds at most 32,766 variables per statement.
  for (let i = 0; i < jobIds.length; i += 500) {
    const rows = await db.select({
      id: breakdownVersions.id,
      jobId: breakdownVersions.jobId,
      number: breakdownVersions.number,
      status: breakdownVersions.status,
      revision: breakdownVersions.revision,
      publishedAt: breakdownVersions.publishedAt,
      updatedAt: breakdownVersions.updatedAt,
    }).from(breakdownVersions)
      .where(and(
        eq(breakdownVersions.organisationId, organisationId),
        inArray(breakdownVersions.jobId, jobIds.slice(i, i + 500)),
        inArray(breakdownVersions.status, ['published', 'draft']),
      ))
    for (const v of rows) {
      if (v.status === 'published') published.set(v.jobId, { id: v.id, number: v.number, publishedAt: v.publishedAt })
      else drafts.set(v.jobId, { id: v.id, number: v.number, revision: v.revision, updatedAt: v.updatedAt })
    }
  }
  return { published, drafts }
}
