// Sign up: creates an organisation and its first admin, and signs them in. Anyone may call it.
import { randomUUID } from 'node:crypto'
import { eq } from 'drizzle-orm'
import { memberships, organisations, users } from '../../db/schema'
import { signupSchema } from '../../../shared/schemas/auth'

export default defineEventHandler(async (event) => {
  const input = await readValid(event, signupSchema)
  const db = await useDb()
  const taken = await db.select({ id: users.id }).from(users).where(eq(users.email, input.email)).limit(1)
  if (taken.length) throw emailTaken()

  const passwordHash = await hashPassword(input.password)
  const now = new Date()
  const organisationId = randomUUID()
  const user = { id: randomUUID(), name: input.name, email: input.email }
  try {
    await writeTransaction(async (tx) => {
      await tx.insert(organisations).values({ id: organisationId, name: input.organisation })
      await tx.insert(users).values({ ...user, passwordHash, passwordChangedAt: now })
      await tx.insert(memberships).values({ id: randomUUID(), organisationId, userId: user.id, role: 'admin' })
      await recordAudit(tx, { organisationId, actorUserId: user.id, action: 'organisation.created', targetType: 'organisation', targetId: organisationId, detail: { name: input.organisation } })
    })
  }
  catch (error) {
    // Two sign-ups with one address at the same moment: the unique index decides.
    if (isUniqueViolation(error)) throw emailTaken()
    throw error
  }
  await startSession(event, user, organisationId)
  setResponseStatus(event, 201)
  return { user, organisation: { id: organisationId, name: input.organisation }, role: 'admin' as const }
})

function emailTaken() {
  return problem(409, 'An account with this e-mail address already exists. Sign in, or reset its password.', 'email')
}
