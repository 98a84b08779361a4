// Change a member's role; the last admin cannot be demoted. Admins only.
import { and, eq } from 'drizzle-orm'
import { memberships } from '../../db/schema'
import { idParamsSchema } from '../../../shared/schemas/common'
import { updateMemberSchema } from '../../../shared/schemas/members'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const input = await readValid(event, updateMemberSchema)
  const caller = await requireRole(event, 'admin')
  const outcome = await writeTransaction(async (tx) => {
    const [member] = await tx.select().from(memberships).where(and(eq(memberships.id, id), eq(memberships.organisationId, caller.organisation.id))).limit(1)
    if (!member) return 'missing' as const
    if (member.role === input.role) return member
    if (member.role === 'admin' && (await adminCount(tx, caller.organisation.id)) <= 1) return 'last-admin' as const
    await tx.update(memberships).set({ role: input.role }).where(eq(memberships.id, id))
    await recordAudit(tx, { organisationId: caller.organisation.id, actorUserId: caller.user.id, action: 'member.role_changed', targetType: 'membership', targetId: id, detail: { from: member.role, to: input.role } })
    return { ...member, role: input.role }
  })
  if (outcome === 'missing') throw notFound('That member')
  if (outcome === 'last-admin') throw lastAdminError('demote')
  return { id: outcome.id, role: outcome.role }
})
