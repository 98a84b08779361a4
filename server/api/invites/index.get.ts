// Open invitations of the caller's organisation. Admins only.
import { and, desc, eq, gt, isNull } from 'drizzle-orm'
import { invites } from '../../db/schema'

export default defineEventHandler(async (event) => {
  const caller = await requireRole(event, 'admin')
  const db = await useDb()
  return db.select({ id: invites.id, email: invites.email, role: invites.role, expiresAt: invites.expiresAt, createdAt: invites.createdAt })
    .from(invites)
    .where(and(eq(invites.organisationId, caller.organisation.id), isNull(invites.acceptedAt), isNull(invites.revokedAt), gt(invites.expiresAt, new Date())))
    .orderBy(desc(invites.createdAt))
})
