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
    const expiresAt = Date.now() + RESET_TOKEN_LIFETIME_MS
    const mail = resetMail({ to: email, link: appLink(`/reset-password?token=${encodeURIComponent(token)}`), minutes: RESET_TOKEN_LIFETIME_MS / 60000 })
    // The link and its mail in one transaction; a mail server that is down delays the mail
    // (mail-outbox.ts), and the answer is the same either way.
    const mailId = await writeTransaction(async (tx) => {
      await tx.insert(passwordResets).values({ id: randomUUID(), userId: user.id, tokenHash: hash, expiresAt: new Date(expiresAt) })
      return queueMail(tx, { ...mail, kind: 'reset', expiresAt })
    })
    await deliverQueuedMail({ ids: [mailId] }).catch(error => console.error('[fourfold] reset mail not sent yet; it stays queued:', error))
  }
  setResponseStatus(event, 202)
  return { message: 'If that address has an account, a link to choose a new password is on its way.' }
})
