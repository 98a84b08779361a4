// Changes the caller's own settings (the daily digest e-mail). Any signed-in member, for their own membership only.
import { and, eq } from 'drizzle-orm'
import { memberships } from '../../db/schema'
import { meSettingsSchema } from '../../../shared/schemas/me'

export default defineEventHandler(async (event) => {
  const input = await readValid(event, meSettingsSchema)
  const caller = await requireSignedIn(event)
  const changed = await writeTransaction(async (tx) => {
    const [row] = await tx.update(memberships).set({ digestEmails: input.digestEmails })
      .where(and(eq(memberships.id, caller.membership.id), eq(memberships.organisationId, caller.organisation.id), eq(memberships.userId, caller.user.id)))
      .returning({ digestEmails: memberships.digestEmails })
    if (!row) return null
    await recordAudit(tx, { organisationId: caller.organisation.id, actorUserId: caller.user.id, action: 'member.digest_emails_changed', targetType: 'membership', targetId: caller.membership.id, detail: { digestEmails: row.digestEmails } })
    return row
  })
  if (!changed) throw notFound('Your membership')
  return { digestEmails: changed.digestEmails }
})
