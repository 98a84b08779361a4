// Members of the caller's organisation with their roles. Admins only.
import { asc, eq } from 'drizzle-orm'
import { memberships, users } from '../../db/schema'

export default defineEventHandler(async (event) => {
  const caller = await requireRole(event, 'admin')
  const db = await useDb()
  return db.select({ id: memberships.id, role: memberships.role, since: memberships.createdAt, userId: users.id, name: users.name, email: users.email })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(eq(memberships.organisationId, caller.organisation.id))
    .orderBy(asc(users.name))
})
