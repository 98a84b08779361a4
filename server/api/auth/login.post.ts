// Sign in with e-mail and password. Anyone may call it; throttled per account and per address.
import { eq } from 'drizzle-orm'
import { memberships, users } from '../../db/schema'
import { loginSchema } from '../../../shared/schemas/auth'

export default defineEventHandler(async (event) => {
  const input = await readValid(event, loginSchema)
  const keys = { account: input.email, address: clientAddress(event) }

  const throttle = await checkSignInThrottle(keys)
  if (throttle.blocked) {
    setResponseHeader(event, 'Retry-After', throttle.retryAfterSeconds)
    const minutes = Math.ceil(throttle.retryAfterSeconds / 60)
    const message = `Too many failed sign-ins. Try again in ${minutes} minute${minutes === 1 ? '' : 's'}, or reset your password.`
    throw problem(429, message)
  }

  const db = await useDb()
  const [row] = await db.select({ id: users.id, name: users.name, email: users.email, passwordHash: users.passwordHash, organisationId: memberships.organisationId })
    .from(users)
    .leftJoin(memberships, eq(memberships.userId, users.id))
    .where(eq(users.email, input.email))
    .limit(1)

  const passwordOk = await verifyPasswordOrDummy(row?.passwordHash, input.password)
  if (!row || !passwordOk || !row.organisationId) {
    await recordSignInFailure(keys)
    throw problem(401, 'That e-mail address and password do not match an account.')
  }

  await clearAccountFailures(keys.account)
  if (passwordNeedsReHash(row.passwordHash)) {
    // Hash settings were raised since this password was set: upgrade it now that we know it.
    const passwordHash = await hashPassword(input.password)
    await serialiseWrite(() => db.update(users).set({ passwordHash }).where(eq(users.id, row.id)))
  }
  await startSession(event, { id: row.id, name: row.name, email: row.email }, row.organisationId)
  return { ok: true }
})
