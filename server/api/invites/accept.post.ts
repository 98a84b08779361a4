// Accept an invitation: sets the invitee's name and password, creates their account and membership,
// and signs them in. Anyone holding a valid invitation token may call it.
import { randomUUID } from 'node:crypto'
import { and, eq, isNull } from 'drizzle-orm'
import { invites, learners, memberships, users } from '../../db/schema'
import { acceptInviteSchema } from '../../../shared/schemas/invites'
import { tokenState } from '../../../shared/utils/tokens'

export default defineEventHandler(async (event) => {
  const input = await readValid(event, acceptInviteSchema)
  const db = await useDb()
  const [invite] = await db.select().from(invites).where(eq(invites.tokenHash, hashToken(input.token))).limit(1)
  const state = !invite ? 'missing' : invite.revokedAt ? 'revoked' : tokenState({ expiresAt: invite.expiresAt, usedAt: invite.acceptedAt }, Date.now())
  if (!invite || state !== 'usable') throw inviteProblem(state)

  const passwordHash = await hashPassword(input.password)
  const now = new Date()
  const user = { id: randomUUID(), name: input.name, email: invite.email }
  const outcome = await writeTransaction(async (tx) => {
    const marked = await tx.update(invites).set({ acceptedAt: now })
      .where(and(eq(invites.id, invite.id), isNull(invites.acceptedAt), isNull(invites.revokedAt)))
      .returning({ id: invites.id })
    if (!marked.length) return 'used' as const
    const [taken] = await tx.select({ id: users.id }).from(users).where(eq(users.email, invite.email)).limit(1)
    if (taken) {
      tx.rollback()
    }
    await tx.insert(users).values({ ...user, passwordHash, passwordChangedAt: now })
    await tx.insert(memberships).values({ id: randomUUID(), organisationId: invite.organisationId, userId: user.id, role: invite.role })
    if (invite.role === 'learner') {
      // A learner's account belongs to a roster entry: the one they were invited for, or a new one.
      const linked = invite.learnerId
        ? await tx.update(learners).set({ userId: user.id, updatedAt: now }).where(and(eq(learners.id, invite.learnerId), eq(learners.organisationId, invite.organisationId), isNull(learners.userId))).returning({ id: learners.id })
        : []
      if (!linked.length) await tx.insert(learners).values({ id: randomUUID(), organisationId: invite.organisationId, name: input.name, userId: user.id })
    }
    await recordAudit(tx, { organisationId: invite.organisationId, actorUserId: user.id, action: 'invite.accepted', targetType: 'invite', targetId: invite.id, detail: { role: invite.role } })
    return 'accepted' as const
  }).catch((error) => {
    if ((error as Error)?.name === 'TransactionRollbackError') return 'taken' as const
    throw error
  })
  if (outcome !== 'accepted') throw inviteProblem(outcome)
  await startSession(event, user, invite.organisationId)
  return { user, role: invite.role }
})

function inviteProblem(state: string) {
  const message = {
    used: 'This invitation has been accepted already. Sign in instead.',
    expired: 'This invitation has expired. Ask your admin to send a new one.',
    revoked: 'This invitation was withdrawn. Ask your admin to send a new one.',
    taken: 'An account with this e-mail address exists already. Sign in instead.',
  }[state] ?? 'This invitation link is not valid. Ask your admin to send a new one.'
  return problem(state === 'taken' ? 409 : 400, message, 'token')
}
