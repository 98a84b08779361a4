// Plan one learner for one job: target date, reason and note (creates or replaces the plan item). Coaches and admins.
import { randomUUID } from 'node:crypto'
import { and, eq } from 'drizzle-orm'
import { planItems } from '../../../db/schema'
import { planCellParamsSchema, planItemSchema } from '../../../../shared/schemas/plan'

export default defineEventHandler(async (event) => {
  const { learnerId, jobId } = await paramsValid(event, planCellParamsSchema)
  const input = await readValid(event, planItemSchema)
  const caller = await requireRole(event, 'admin', 'coach')
  const organisationId = caller.organisation.id
  await writeTransaction(async (tx) => {
    const { learner, job } = await planCellOwners(tx, organisationId, learnerId, jobId)
    if (learner.archivedAt) throw conflict(`${learner.name} is archived. Bring them back to the roster before planning for them.`)
    if (job.archivedAt) throw conflict(`“${job.title}” is archived. Bring the job back before planning it.`)
    const now = new Date()
    const where = and(eq(planItems.organisationId, organisationId), eq(planItems.learnerId, learnerId), eq(planItems.jobId, jobId))
    const [existing] = await tx.select({ id: planItems.id }).from(planItems).where(where).limit(1)
    const id = existing?.id ?? randomUUID()
    if (existing) await tx.update(planItems).set({ ...input, updatedAt: now }).where(where)
    else await tx.insert(planItems).values({ id, organisationId, learnerId, jobId, ...input, createdBy: caller.user.id, createdAt: now, updatedAt: now })
    await recordChange(tx, organisationId, 'plan', id)
    await recordAudit(tx, {
      organisationId,
      actorUserId: caller.user.id,
      action: existing ? 'plan.updated' : 'plan.created',
      targetType: 'plan_item',
      targetId: id,
      detail: { learnerId, jobId, ...input },
    })
  })
  return planCellOf(organisationId, learnerId, jobId)
})
