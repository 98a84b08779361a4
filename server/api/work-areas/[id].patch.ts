// Rename a work area. Admins only.
import { and, eq } from 'drizzle-orm'
import { workAreas } from '../../db/schema'
import { idParamsSchema } from '../../../shared/schemas/common'
import { workAreaSchema } from '../../../shared/schemas/work-areas'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const input = await readValid(event, workAreaSchema)
  const caller = await requireRole(event, 'admin')
  let renamed: boolean
  try {
    renamed = await writeTransaction(async (tx) => {
      const rows = await tx.update(workAreas).set({ name: input.name })
        .where(and(eq(workAreas.id, id), eq(workAreas.organisationId, caller.organisation.id)))
        .returning({ id: workAreas.id })
      if (rows.length) await recordAudit(tx, { organisationId: caller.organisation.id, actorUserId: caller.user.id, action: 'work_area.renamed', targetType: 'work_area', targetId: id, detail: { name: input.name } })
      return rows.length > 0
    })
  }
  catch (error) {
    if (isUniqueViolation(error)) throw workAreaNameTaken()
    throw error
  }
  if (!renamed) throw notFound('That work area')
  return { id, name: input.name }
})
