// Invite someone by e-mail with a role; the mail carries a one-time link. Admins only.
import { randomUUID } from 'node:crypto'
import { and, eq, isNull } from 'drizzle-orm'
import { invites, learners, users } from '../../db/schema'
import { createInviteSchema } from '../../../shared/schemas/invites'
import { INVITE_TOKEN_LIFETIME_MS } from '../../../shared/utils/tokens'
import { ROLE_LABELS } from '../../../shared/types/roles'

export default defineEventHandler(async (event) => {
  const input = await readValid(event, createInviteSchema)
  const caller = await requireRole(event, 'admin')
  const db = await useDb()
  const [existing] = await db.select({ id: users.id }).from(users).where(eq(users.email, input.email)).limit(1)
  if (existing) throw problem(409, 'This address already has a Fourfold account, and an account belongs to one organisation.', 'email')
  if (input.learnerId) {
    const [learner] = await db.select({ userId: learners.userId }).from(learners).where(and(eq(learners.id, input.learnerId), eq(learners.organisationId, caller.organisation.id))).limit(1)
    const message = !learner ? 'Choose a learner from the roster.' : learner.userId ? 'This learner has an account already.' : input.role !== 'learner' ? 'A roster entry can only be invited as a learner.' : ''
    if (message) throw problem(422, message, 'learnerId')
  }
  const { token, hash } = newSecretToken()
  const now = Date.now()
  const invite = {
    id: randomUUID(),
    organisationId: caller.organisation.id,
    email: input.email,
    role: input.role,
    learnerId: input.learnerId ?? null,
    tokenHash: hash,
    invitedBy: caller.user.id,
    expiresAt: new Date(now + INVITE_TOKEN_LIFETIME_MS),
  }
  const mail = inviteMail({
    to: input.email,
    organisation: caller.organisation.name,
    inviter: caller.user.name,
    role: ROLE_LABELS[input.role].toLowerCase(),
    link: appLink(`/accept-invite?token=${encodeURIComponent(token)}`),
    days: INVITE_TOKEN_LIFETIME_MS / 86_400_000,
  })
  const mailId = await writeTransaction(async (tx) => {
    // A new invitation to the same address replaces any still open.
    await tx.update(invites).set({ revokedAt: new Date(now) }).where(and(
      eq(invites.organisationId, caller.organisation.id),
      eq(invites.email, input.email),
      isNull(invites.acceptedAt),
      isNull(invites.revokedAt),
    ))
    await tx.insert(invites).values(invite)
    await recordAudit(tx, { organisationId: caller.organisation.id, actorUserId: caller.user.id, action: 'invite.created', targetType: 'invite', targetId: invite.id, detail: { email: input.email, role: input.role } })
    // The mail is kept with the invitation: a mail server that is down delays it, never loses it.
    return queueMail(tx, { ...mail, kind: 'invite', organisationId: caller.organisation.id, expiresAt: invite.expiresAt.getTime() }, now)
  })
  // false: the mail server did not take it now; it stays queued and goes out when it answers.
  const mailed = (await deliverQueuedMail({ ids: [mailId] }).catch(() => ({ sent: 0 }))).sent === 1
  setResponseStatus(event, 201)
  return { id: invite.id, email: invite.email, role: invite.role, expiresAt: invite.expiresAt, mailed }
})
