// Add a work area to the caller's organisation. Admins only.
import { randomUUID } from 'node:crypto'
import { workAreas } from '../../db/schema'
import { workAreaSchema } from '../../../shared/schemas/work-areas'

export default defineEventHandler(async (event) => {
  const input = await readValid(event, workAreaSchema)
  const caller = await requireRole(event, 'admin')
  const area = { id: randomUUID(), organisationId: caller.organisation.id, name: input.name }
  try {
    await writeTransaction(async (tx) => {
      await tx.insert(workAreas).values(area)
      await recordAudit(tx, { organisationId: caller.organisation.id, actorUserId: caller.user.id, action: 'work_area.created', targetType: 'work_area', targetId: area.id, detail: { name: area.name } })
    })
  }
  catch (error) {
    if (isUniqueViolation(error)) throw workAreaNameTaken()
    throw error
  }
  setResponseStatus(event, 201)
  return { id: area.id, name: area.name }
})
