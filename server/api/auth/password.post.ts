// Change the signed-in user's password; other sessions of theirs end. Any signed-in member.
import { eq } from 'drizzle-orm'
import { users } from '../../db/schema'
import { changePasswordSchema } from '../../../shared/schemas/auth'

export default defineEventHandler(async (event) => {
  const input = await readValid(event, changePasswordSchema)
  const caller = await requireSignedIn(event)
  const db = await useDb()
  const [row] = await db.select({ passwordHash: users.passwordHash }).from(users).where(eq(users.id, caller.user.id)).limit(1)
  if (!row || !(await verifyPassword(row.passwordHash, input.currentPassword))) {
    throw problem(422, 'Your current password is not right.', 'currentPassword')
  }
  const passwordHash = await hashPassword(input.newPassword)
  const now = new Date()
  await writeTransaction(async (tx) => {
    await tx.update(users).set({ passwordHash, passwordChangedAt: now }).where(eq(users.id, caller.user.id))
    await recordAudit(tx, { organisationId: caller.organisation.id, actorUserId: caller.user.id, action: 'password.changed', targetType: 'user', targetId: caller.user.id })
  })
  // Sessions begun before now are refused; give this device a fresh one.
  await startSession(event, caller.user, caller.organisation.id)
  return { message: 'Your password has been changed.' }
})
