// One learner's history: lessons with scores, spot checks with outcomes, and their training state per job. Coaches, admins, auditors; a learner only their own.
import { and, eq } from 'drizzle-orm'
import { learners, workAreas } from '../../../db/schema'
import { idParamsSchema } from '../../../../shared/schemas/common'
import type { LearnerHistory } from '../../../../shared/types/people'

export default defineEventHandler(async (event): Promise<LearnerHistory> => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireSignedIn(event)
  const db = await useDb()
  const org = caller.organisation.id
  const [learner] = await db.select({
    id: learners.id, name: learners.name, reference: learners.reference, userId: learners.userId, workAreaName: workAreas.name, archivedAt: learners.archivedAt,
  }).from(learners)
    .leftJoin(workAreas, and(eq(workAreas.id, learners.workAreaId), eq(workAreas.organisationId, org)))
    .where(and(eq(learners.id, id), eq(learners.organisationId, org)))
    .limit(1)
  if (!learner) throw notFound('That learner')
  assertMayReadLearner(caller, learner.userId, 'history')
  const [lessonList, checkList, states] = await Promise.all([
    learnerLessons(db, org, id),
    learnerChecks(db, org, id),
    jobStatesByLearner(db, org, [id]),
  ])
  const { userId, ...rest } = learner
  return {
    learner: { ...rest, workAreaName: rest.workAreaName ?? null, hasAccount: userId !== null, archivedAt: rest.archivedAt?.getTime() ?? null },
    lessons: lessonList,
    checks: checkList,
    jobs: states.get(id) ?? [],
  }
})
