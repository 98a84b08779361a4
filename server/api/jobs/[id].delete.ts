// Archive a job: it leaves the default jobs list, its versions and records stay. Coaches and admins.
import { and, eq } from 'drizzle-orm'
import { jobs } from '../../db/schema'
import { idParamsSchema } from '../../../shared/schemas/common'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireRole(event, 'coach', 'admin')
  const organisationId = caller.organisation.id
  const found = await writeTransaction(async (tx) => {
    const [job] = await tx.select({ title: jobs.title, archivedAt: jobs.archivedAt }).from(jobs).where(and(eq(jobs.id, id), eq(jobs.organisationId, organisationId))).limit(1)
    if (!job) return false
    // Archiving twice keeps the first date.
    if (job.archivedAt) return true
    const now = new Date()
    await tx.update(jobs).set({ archivedAt: now, updatedAt: now }).where(and(eq(jobs.id, id), eq(jobs.organisationId, organisationId)))
    await recordJobChange(tx, organisationId, id)
    await recordAudit(tx, { organisationId, actorUserId: caller.user.id, action: 'job.archived', targetType: 'job', targetId: id, detail: { title: job.title } })
    return true
  })
  if (!found) throw notFound('That job')
  setResponseStatus(event, 204)
  return null
})
