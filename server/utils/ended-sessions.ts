// Signing out ends the session on the server as well as in the browser: the sealed cookie is
// self-contained, so a copy taken before sign-out would otherwise go on working until it expires.
// The session's id (made at sign-in, startSession) is listed in ended_sessions and
// requireSignedIn refuses it. Called from nuxt-auth-utils' "clear" hook (server/plugins/
// session-end.ts), so every way of clearing a session ends it: POST /api/auth/logout, the module's
// own DELETE /api/_auth/session, and a session requireSignedIn refuses.
import { lt } from 'drizzle-orm'
import { endedSessions } from '../db/schema'

/** Lists the session as ended until it would have expired anyway, and prunes rows past that. */
export async function endSession(sessionId: string, signedInAt: number | undefined) {
  const maxAgeMs = (Number(useRuntimeConfig().session?.maxAge) || 60 * 60 * 12) * 1000
  const now = Date.now()
  // The cookie cannot outlive sign-in + maxAge (h3 refuses an older session), so neither need the row.
  const expiresAt = (signedInAt ?? now) + maxAgeMs
  await writeTransaction(async (tx) => {
    await tx.insert(endedSessions).values({ sessionId, expiresAt }).onConflictDoNothing()
    await tx.delete(endedSessions).where(lt(endedSessions.expiresAt, now))
  })
}
