// Withdraw an open invitation so its link stops working. Admins only.
import { and, eq, isNull } from 'drizzle-orm'
import { invites } from '../../db/schema'
import { idParamsSchema } from '../../../shared/schemas/common'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireRole(event, 'admin')
  const revoked = await writeTransaction(async (tx) => {
    const rows = await tx.update(invites).set({ revokedAt: new Date() })
      .where(and(eq(invites.id, id), eq(invites.organisationId, caller.organisation.id), isNull(invites.acceptedAt), isNull(invites.revokedAt)))
      .returning({ id: invites.id })
    if (rows.length) await recordAudit(tx, { organisationId: caller.organisation.id, actorUserId: caller.user.id, action: 'invite.revoked', targetType: 'invite', targetId: id })
    return rows.length > 0
  })
  if (!revoked) throw notFound('That open invitation')
  setResponseStatus(event, 204)
  return null
})
