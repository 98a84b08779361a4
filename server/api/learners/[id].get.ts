// One learner of the roster. Coaches, admins, auditors; a learner may read their own entry.
import { and, eq } from 'drizzle-orm'
import { learners, workAreas } from '../../db/schema'
import { idParamsSchema } from '../../../shared/schemas/common'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireSignedIn(event)
  const db = await useDb()
  const [row] = await db.select({
    id: learners.id,
    name: learners.name,
    reference: learners.reference,
    workAreaId: learners.workAreaId,
    workAreaName: workAreas.name,
    userId: learners.userId,
    archivedAt: learners.archivedAt,
    createdAt: learners.createdAt,
    updatedAt: learners.updatedAt,
  }).from(learners)
    .leftJoin(workAreas, eq(workAreas.id, learners.workAreaId))
    .where(and(eq(learners.id, id), eq(learners.organisationId, caller.organisation.id)))
    .limit(1)
  if (!row) throw notFound('That learner')
  assertMayReadLearner(caller, row.userId, 'record')
  return row
})
