// Reset a password with the e-mailed one-time token. Anyone holding a valid token may call it.
import { and, eq, isNull } from 'drizzle-orm'
import { memberships, passwordResets, users } from '../../db/schema'
import { resetSchema } from '../../../shared/schemas/auth'
import { tokenState } from '../../../shared/utils/tokens'

export default defineEventHandler(async (event) => {
  const input = await readValid(event, resetSchema)
  const db = await useDb()
  const [reset] = await db.select().from(passwordResets).where(eq(passwordResets.tokenHash, hashToken(input.token))).limit(1)
  const state = reset ? tokenState(reset, Date.now()) : 'missing'
  if (!reset || state !== 'usable') {
    const message = state === 'used'
      ? 'This reset link has been used already. Ask for a new one.'
      : state === 'expired' ? 'This reset link has expired. Ask for a new one.' : 'This reset link is not valid. Ask for a new one.'
    throw createError({ statusCode: 400, message, data: { message, fieldErrors: { token: [message] } } })
  }
  const passwordHash = await hashPassword(input.password)
  const now = new Date()
  const used = await writeTransaction(async (tx) => {
    // Marking the token used and changing the password happen together, once.
    const marked = await tx.update(passwordResets).set({ usedAt: now }).where(and(eq(passwordResets.id, reset.id), isNull(passwordResets.usedAt))).returning({ id: passwordResets.id })
    if (!marked.length) return false
    await tx.update(users).set({ passwordHash, passwordChangedAt: now }).where(eq(users.id, reset.userId))
    const [membership] = await tx.select({ organisationId: memberships.organisationId }).from(memberships).where(eq(memberships.userId, reset.userId)).limit(1)
    if (membership) await recordAudit(tx, { organisationId: membership.organisationId, actorUserId: reset.userId, action: 'password.reset', targetType: 'user', targetId: reset.userId })
    return true
  })
  if (!used) {
    const message = 'This reset link has been used already. Ask for a new one.'
    throw createError({ statusCode: 400, message, data: { message, fieldErrors: { token: [message] } } })
  }
  await clearAccountFailuresForUser(reset.userId)
  return { message: 'Your password has been changed. Sign in with the new one.' }
})

async function clearAccountFailuresForUser(userId: string) {
  const db = await useDb()
  const [user] = await db.select({ email: users.email }).from(users).where(eq(users.id, userId)).limit(1)
  if (user) await clearAccountFailures(user.email)
}
