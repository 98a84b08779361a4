// The organisation's jobs with their published and draft versions; ?archived=1 includes archived jobs. Any member (learners see no drafts).
import { and, asc, eq, isNull } from 'drizzle-orm'
import { z } from 'zod'
import { jobs, workAreas } from '../../db/schema'

const querySchema = z.object({
  archived: z.enum(['0', '1'], { error: 'Use archived=1 to include archived jobs, or leave it out.' }).optional(),
})

export default defineEventHandler(async (event) => {
  const query = queryValid(event, querySchema)
  const caller = await requireSignedIn(event)
  const organisationId = caller.organisation.id
  const db = await useDb()
  const rows = await db.select({
    id: jobs.id,
    title: jobs.title,
    workAreaId: jobs.workAreaId,
    workAreaName: workAreas.name,
    hazards: jobs.hazards,
    coverageTarget: jobs.coverageTarget,
    archivedAt: jobs.archivedAt,
  }).from(jobs)
    .leftJoin(workAreas, and(eq(workAreas.id, jobs.workAreaId), eq(workAreas.organisationId, organisationId)))
    .where(and(eq(jobs.organisationId, organisationId), query.archived === '1' ? undefined : isNull(jobs.archivedAt)))
    .orderBy(asc(jobs.title))
  const { published, drafts } = await currentVersionsOf(db, organisationId, rows.map(r => r.id))
  const seesDrafts = caller.membership.role !== 'learner'
  return rows.map(job => ({
    ...job,
    published: published.get(job.id) ?? null,
    draft: seesDrafts ? drafts.get(job.id) ?? null : null,
  }))
})
