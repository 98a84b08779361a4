// Forgotten password: e-mails a one-time reset link. Anyone may call it; always 202,
// so the answer never tells whether an address has an account.
import { randomUUID } from 'node:crypto'
import { eq } from 'drizzle-orm'
import { passwordResets, users } from '../../db/schema'
import { forgotSchema } from '../../../shared/schemas/auth'
import { RESET_TOKEN_LIFETIME_MS } from '../../../shared/utils/tokens'

export default defineEventHandler(async (event) => {
  const { email } = await readValid(event, forgotSchema)
  const db = await useDb()
  const [user] = await db.select({ id: users.id }).from(users).where(eq(users.email, email)).limit(1)
  if (user) {
    const { token, hash } = newSecretToken()
    await serialiseWrite(() => db.insert(passwordResets).values({ id: randomUUID(), userId: user.id, tokenHash: hash, expiresAt: new Date(Date.now() + RESET_TOKEN_LIFETIME_MS) }))
    try {
      await sendMail(resetMail({ to: email, link: appLink(`/reset-password?token=${encodeURIComponent(token)}`), minutes: RESET_TOKEN_LIFETIME_MS / 60000 }))
    }
    catch (error) {
      console.error('[fourfold] reset mail not sent:', error)
    }
  }
  setResponseStatus(event, 202)
  return { message: 'If that address has an account, a link to choose a new password is on its way.' }
})
