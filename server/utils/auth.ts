// Authorization in one place. Every route that touches organisation data calls
// requireRole first; it re-reads the membership from the database on every
// request, so a changed role or a removal takes effect at once.
import { randomUUID } from 'node:crypto'
import type { H3Event } from 'h3'
import { and, eq } from 'drizzle-orm'
import { endedSessions, memberships, organisations, users } from '../db/schema'
import type { Role } from '../../shared/types/roles'

export interface Caller {
  user: { id: string, name: string, email: string }
  membership: { id: string, role: Role }
  organisation: { id: string, name: string, coachesMayPublish: boolean }
}

function unauthorised(message = 'Sign in to continue.') {
  return problem(401, message)
}

export async function requireSignedIn(event: H3Event): Promise<Caller> {
  const session = await getUserSession(event)
  const userId = session.user?.id
  const organisationId = session.organisationId
  const sessionId = session.sessionId
  if (!userId || !organisationId) throw unauthorised()
  // A session from before sessions had ids cannot be ended at sign-out: sign in again (12 h at most).
  if (!sessionId) {
    await clearUserSession(event)
    throw unauthorised('Your session has ended. Sign in again.')
  }
  const db = await useDb()
  const [row] = await db.select({
    user: { id: users.id, name: users.name, email: users.email, passwordChangedAt: users.passwordChangedAt },
    membership: { id: memberships.id, role: memberships.role },
    organisation: { id: organisations.id, name: organisations.name, coachesMayPublish: organisations.coachesMayPublish },
    endedSession: endedSessions.sessionId,
  }).from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .innerJoin(organisations, eq(organisations.id, memberships.organisationId))
    .leftJoin(endedSessions, eq(endedSessions.sessionId, sessionId))
    .where(and(eq(memberships.userId, userId), eq(memberships.organisationId, organisationId)))
    .limit(1)
  // Signed out (a copy of the cookie), removed from the organisation, or the password changed
  // since this session began.
  if (!row || row.endedSession !== null || (session.signedInAt ?? 0) < row.user.passwordChangedAt.getTime()) {
    if (row?.endedSession) event.context.sessionAlreadyEnded = true
    await clearUserSession(event)
    throw unauthorised('Your session has ended. Sign in again.')
  }
  const { passwordChangedAt: _changed, ...user } = row.user
  return { user, membership: row.membership, organisation: row.organisation }
}

export async function requireRole(event: H3Event, ...roles: Role[]): Promise<Caller> {
  const caller = await requireSignedIn(event)
  if (roles.length && !roles.includes(caller.membership.role)) {
    throw forbidden(`This needs the ${roles.join(' or ')} role; you are signed in as ${caller.membership.role}.`)
  }
  return caller
}

/** Learners may read what is about them only; every other role reads the whole organisation. */
export function assertMayReadLearner(caller: Caller, learnerUserId: string | null, what: string) {
  if (caller.membership.role === 'learner' && learnerUserId !== caller.user.id) throw forbidden(`Learners can see only their own ${what}.`)
}

/**
 * h3 reads the request's cookie again after clearing a session, so the old session's id and start
 * time (from which the 12 hours count) would carry over into the one replacing it: a coach signing
 * in over a colleague's eleven-hour-old session would be signed out an hour later. Taking the old
 * cookie out of this request first makes the replacement a new session.
 */
function forgetRequestSession(event: H3Event) {
  const name = useRuntimeConfig().session?.name || 'nuxt-session'
  const header = event.node.req.headers.cookie
  if (header) event.node.req.headers.cookie = header.split(';').filter(part => part.split('=')[0]!.trim() !== name).join(';')
  if (event.context.sessions) Reflect.deleteProperty(event.context.sessions, name)
}

/**
 * Starts a fresh sealed session (replace, never merge: no state carries over from before sign-in)
 * with an id of its own, by which signing out ends it (server/utils/ended-sessions.ts).
 */
export async function startSession(event: H3Event, user: { id: string, name: string, email: string }, organisationId: string) {
  // Signing in over another session (a shared tablet) ends that one too.
  const previous = await getUserSession(event)
  if (previous.sessionId) await endSession(previous.sessionId, previous.signedInAt)
  forgetRequestSession(event)
  await replaceUserSession(event, { user, organisationId, signedInAt: Date.now(), sessionId: randomUUID() })
}
