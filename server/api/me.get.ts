// Who is signed in: user, organisation and role, and their own settings. Any signed-in member.
import { eq } from 'drizzle-orm'
import { memberships } from '../db/schema'

export default defineEventHandler(async (event) => {
  const { user, organisation, membership } = await requireSignedIn(event)
  const db = await useDb()
  const [settings] = await db.select({ digestEmails: memberships.digestEmails }).from(memberships).where(eq(memberships.id, membership.id)).limit(1)
  return { user, organisation, role: membership.role, settings: { digestEmails: settings?.digestEmails ?? true } }
})
