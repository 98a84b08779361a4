// Add a learner to the roster (no account needed). Coaches and admins.
import { randomUUID } from 'node:crypto'
import { learners } from '../../db/schema'
import { createLearnerSchema } from '../../../shared/schemas/learners'

export default defineEventHandler(async (event) => {
  const input = await readValid(event, createLearnerSchema)
  const caller = await requireRole(event, 'admin', 'coach')
  await assertOwnWorkArea(await useDb(), caller.organisation.id, input.workAreaId)
  const learner = { id: randomUUID(), organisationId: caller.organisation.id, ...input }
  await writeTransaction(async (tx) => {
    await tx.insert(learners).values(learner)
    await recordChange(tx, caller.organisation.id, 'learner', learner.id)
    await recordAudit(tx, { organisationId: caller.organisation.id, actorUserId: caller.user.id, action: 'learner.created', targetType: 'learner', targetId: learner.id, detail: { name: learner.name } })
  })
  setResponseStatus(event, 201)
  return { id: learner.id, name: learner.name, reference: learner.reference, workAreaId: learner.workAreaId }
})
