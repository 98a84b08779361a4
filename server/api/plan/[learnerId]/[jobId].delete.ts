// Set one learner × job back to "not needed" (removes the plan item; lessons and checks stay). Coaches and admins.
import { and, eq } from 'drizzle-orm'
import { planItems } from '../../../db/schema'
import { planCellParamsSchema } from '../../../../shared/schemas/plan'

export default defineEventHandler(async (event) => {
  const { learnerId, jobId } = await paramsValid(event, planCellParamsSchema)
  const caller = await requireRole(event, 'admin', 'coach')
  const organisationId = caller.organisation.id
  await writeTransaction(async (tx) => {
    await planCellOwners(tx, organisationId, learnerId, jobId)
    const removed = await tx.delete(planItems)
      .where(and(eq(planItems.organisationId, organisationId), eq(planItems.learnerId, learnerId), eq(planItems.jobId, jobId)))
      .returning({ id: planItems.id, targetDate: planItems.targetDate, reason: planItems.reason })
    // Nothing planned already: the answer is the same cell, and nothing is recorded.
    for (const row of removed) {
      await recordChange(tx, organisationId, 'plan', row.id)
      await recordAudit(tx, { organisationId, actorUserId: caller.user.id, action: 'plan.removed', targetType: 'plan_item', targetId: row.id, detail: { learnerId, jobId, targetDate: row.targetDate, reason: row.reason } })
    }
  })
  return planCellOf(organisationId, learnerId, jobId)
})
