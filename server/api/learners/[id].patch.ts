// Edit or archive a learner of the roster. Coaches and admins.
import { and, eq } from 'drizzle-orm'
import { learners } from '../../db/schema'
import { idParamsSchema } from '../../../shared/schemas/common'
import { updateLearnerSchema } from '../../../shared/schemas/learners'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const { archived, ...fields } = await readValid(event, updateLearnerSchema)
  const caller = await requireRole(event, 'admin', 'coach')
  await assertOwnWorkArea(await useDb(), caller.organisation.id, fields.workAreaId)
  const now = new Date()
  const changes = { ...fields, updatedAt: now, ...(archived === undefined ? {} : { archivedAt: archived ? now : null }) }
  const [row] = await writeTransaction(async (tx) => {
    const rows = await tx.update(learners).set(changes).where(and(eq(learners.id, id), eq(learners.organisationId, caller.organisation.id)))
      .returning({ id: learners.id, name: learners.name, reference: learners.reference, workAreaId: learners.workAreaId, archivedAt: learners.archivedAt })
    if (rows.length) await recordChange(tx, caller.organisation.id, 'learner', id)
    if (rows.length) await recordAudit(tx, { organisationId: caller.organisation.id, actorUserId: caller.user.id, action: 'learner.updated', targetType: 'learner', targetId: id, detail: { ...fields, archived } })
    return rows
  })
  if (!row) throw notFound('That learner')
  return row
})
