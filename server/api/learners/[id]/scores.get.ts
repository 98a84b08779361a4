// A learner's lessons with their scores, oldest first (for the chart). Coaches, admins, auditors; the learner themself.
import { and, asc, eq } from 'drizzle-orm'
import { breakdownVersions, jobs, learners, lessonScores, lessons } from '../../../db/schema'
import { idParamsSchema } from '../../../../shared/schemas/common'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireSignedIn(event)
  const db = await useDb()
  const org = caller.organisation.id
  const [learner] = await db.select({ id: learners.id, userId: learners.userId }).from(learners).where(and(eq(learners.id, id), eq(learners.organisationId, org))).limit(1)
  if (!learner) throw notFound('That learner')
  assertMayReadLearner(caller, learner.userId, 'scores')
  return db.select({
    lessonId: lessons.id, jobId: lessons.jobId, jobTitle: jobs.title, versionNumber: breakdownVersions.number, startedAt: lessons.startedAt, signedOffAt: lessons.signedOffAt,
    decision: lessons.decision, recall: lessonScores.recall, order: lessonScores.orderScore, readiness: lessonScores.readiness,
  }).from(lessons)
    .innerJoin(jobs, eq(jobs.id, lessons.jobId))
    .innerJoin(breakdownVersions, eq(breakdownVersions.id, lessons.versionId))
    .leftJoin(lessonScores, eq(lessonScores.lessonId, lessons.id))
    .where(and(eq(lessons.learnerId, id), eq(lessons.organisationId, org)))
    .orderBy(asc(lessons.startedAt))
})
