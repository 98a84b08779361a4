// Change a job's fields (title, work area, hazards, PPE, …). Coaches and admins.
import { and, eq } from 'drizzle-orm'
import { jobs } from '../../db/schema'
import { idParamsSchema } from '../../../shared/schemas/common'
import { updateJobSchema } from '../../../shared/schemas/jobs'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const input = await readValid(event, updateJobSchema)
  const caller = await requireRole(event, 'coach', 'admin')
  const organisationId = caller.organisation.id
  const job = await writeTransaction(async (tx) => {
    const [existing] = await tx.select({ id: jobs.id }).from(jobs).where(and(eq(jobs.id, id), eq(jobs.organisationId, organisationId))).limit(1)
    if (!existing) return undefined
    await assertOwnWorkArea(tx, organisationId, input.workAreaId)
    const [row] = await tx.update(jobs).set({ ...input, updatedAt: new Date() })
      .where(and(eq(jobs.id, id), eq(jobs.organisationId, organisationId)))
      .returning()
    await recordJobChange(tx, organisationId, id)
    await recordAudit(tx, { organisationId, actorUserId: caller.user.id, action: 'job.updated', targetType: 'job', targetId: id, detail: { fields: Object.keys(input) } })
    return row
  })
  if (!job) throw notFound('That job')
  return jobView(job)
})
