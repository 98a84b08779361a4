// Reset a password with the e-mailed one-time token. Anyone holding a valid token may call it.
import { and, eq, isNull } from 'drizzle-orm'
import { memberships, passwordResets, users } from '../../db/schema'
import { resetSchema } from '../../../shared/schemas/auth'
import { tokenState } from '../../../shared/utils/tokens'

export default defineEventHandler(async (event) => {
  const input = await readValid(event, resetSchema)
  const db = await useDb()
  // The account's address comes with the token: the throttle counts failures by address.
  const [reset] = await db.select({ id: passwordResets.id, userId: passwordResets.userId, expiresAt: passwordResets.expiresAt, usedAt: passwordResets.usedAt, email: users.email })
    .from(passwordResets).innerJoin(users, eq(users.id, passwordResets.userId))
    .where(eq(passwordResets.tokenHash, hashToken(input.token))).limit(1)
  const state = reset ? tokenState(reset, Date.now()) : 'missing'
  if (!reset || state !== 'usable') {
    const message = state === 'used'
      ? 'This reset link has been used already. Ask for a new one.'
      : state === 'expired' ? 'This reset link has expired. Ask for a new one.' : 'This reset link is not valid. Ask for a new one.'
    throw problem(400, message, 'token')
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
  if (!used) throw problem(400, 'This reset link has been used already. Ask for a new one.', 'token')
  await clearAccountFailures(reset.email)
  return { message: 'Your password has been changed. Sign in with the new one.' }
})
