// Organisation settings: its name, and whether coaches may publish breakdowns. Admins only.
import { eq } from 'drizzle-orm'
import { organisations } from '../../db/schema'
import { updateOrganisationSchema } from '../../../shared/schemas/organisation'

export default defineEventHandler(async (event) => {
  const input = await readValid(event, updateOrganisationSchema)
  const caller = await requireRole(event, 'admin')
  const [updated] = await writeTransaction(async (tx) => {
    const rows = await tx.update(organisations).set(input).where(eq(organisations.id, caller.organisation.id))
      .returning({ id: organisations.id, name: organisations.name, coachesMayPublish: organisations.coachesMayPublish })
    await recordAudit(tx, { organisationId: caller.organisation.id, actorUserId: caller.user.id, action: 'organisation.updated', targetType: 'organisation', targetId: caller.organisation.id, detail: input })
    return rows
  })
  return updated
})
