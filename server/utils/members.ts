// The last-admin rule: an organisation always keeps at least one admin.
import { and, count, eq } from 'drizzle-orm'
import { memberships } from '../db/schema'

type Reader = Pick<Db, 'select'>

export async function adminCount(tx: Reader, organisationId: string): Promise<number> {
  const [row] = await tx.select({ n: count() }).from(memberships).where(and(eq(memberships.organisationId, organisationId), eq(memberships.role, 'admin')))
  return row?.n ?? 0
}

export function lastAdminError(action: 'demote' | 'remove') {
  const message = action === 'demote'
    ? 'This is the organisation\'s last admin. Make someone else an admin first.'
    : 'The last admin cannot be removed. Make someone else an admin first.'
  return conflict(message)
}
