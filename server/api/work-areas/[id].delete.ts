// Remove a work area. Admins only.
import { and, eq } from 'drizzle-orm'
import { workAreas } from '../../db/schema'
import { idParamsSchema } from '../../../shared/schemas/common'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireRole(event, 'admin')
  const removed = await writeTransaction(async (tx) => {
    const rows = await tx.delete(workAreas).where(and(eq(workAreas.id, id), eq(workAreas.organisationId, caller.organisation.id))).returning({ id: workAreas.id, name: workAreas.name })
    if (rows.length) await recordAudit(tx, { organisationId: caller.organisation.id, actorUserId: caller.user.id, action: 'work_area.removed', targetType: 'work_area', targetId: id, detail: { name: rows[0]!.name } })
    return rows.length > 0
  })
  if (!removed) throw notFound('That work area')
  setResponseStatus(event, 204)
  return null
})
