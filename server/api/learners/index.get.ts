// The roster of the caller's organisation (archived learners with ?archived=1). Coaches, admins, auditors.
import { and, asc, eq, isNull } from 'drizzle-orm'
import { z } from 'zod'
import { learners, users, workAreas } from '../../db/schema'

const querySchema = z.object({ archived: z.enum(['0', '1']).optional() })

export default defineEventHandler(async (event) => {
  const { archived } = queryValid(event, querySchema)
  const caller = await requireRole(event, 'admin', 'coach', 'auditor')
  const db = await useDb()
  return db.select({
    id: learners.id,
    name: learners.name,
    reference: learners.reference,
    workAreaId: learners.workAreaId,
    workAreaName: workAreas.name,
    hasAccount: users.id,
    archivedAt: learners.archivedAt,
    updatedAt: learners.updatedAt,
  }).from(learners)
    .leftJoin(workAreas, eq(workAreas.id, learners.workAreaId))
    .leftJoin(users, eq(users.id, learners.userId))
    .where(and(eq(learners.organisationId, caller.organisation.id), archived === '1' ? undefined : isNull(learners.archivedAt)))
    .orderBy(asc(learners.name))
    .then(rows => rows.map(r => ({ ...r, hasAccount: !!r.hasAccount })))
})
