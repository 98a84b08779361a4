// Remove a member from the organisation (their account goes with it); never the last admin. Admins only.
import { and, eq } from 'drizzle-orm'
import { memberships, users } from '../../db/schema'
import { idParamsSchema } from '../../../shared/schemas/common'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireRole(event, 'admin')
  const outcome = await writeTransaction(async (tx) => {
    const [member] = await tx.select().from(memberships).where(and(eq(memberships.id, id), eq(memberships.organisationId, caller.organisation.id))).limit(1)
    if (!member) return 'missing' as const
    if (member.role === 'admin' && (await adminCount(tx, caller.organisation.id)) <= 1) return 'last-admin' as const
    const [user] = await tx.select({ email: users.email, name: users.name }).from(users).where(eq(users.id, member.userId)).limit(1)
    await tx.delete(memberships).where(eq(memberships.id, id))
    // An account belongs to one organisation, so it goes with the membership;
    // the audit log keeps who it was.
    await tx.delete(users).where(eq(users.id, member.userId))
    await recordAudit(tx, { organisationId: caller.organisation.id, actorUserId: caller.user.id === member.userId ? null : caller.user.id, action: 'member.removed', targetType: 'membership', targetId: id, detail: { email: user?.email, name: user?.name, role: member.role } })
    return 'removed' as const
  })
  if (outcome === 'missing') throw notFound('That member')
  if (outcome === 'last-admin') throw lastAdminError('remove')
  setResponseStatus(event, 204)
  return null
})
