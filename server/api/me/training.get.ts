// The signed-in learner's own training: study cards of the breakdowns they were taught, their lessons and spot checks, their state per job. Learners only.
import { and, asc, eq } from 'drizzle-orm'
import { learners } from '../../db/schema'
import type { MyTraining } from '../../../shared/types/people'

export default defineEventHandler(async (event): Promise<MyTraining> => {
  const caller = await requireRole(event, 'learner')
  const db = await useDb()
  const org = caller.organisation.id
  // The roster entry linked to this account (accepting a learner invite links or creates it).
  const [learner] = await db.select({ id: learners.id, name: learners.name }).from(learners)
    .where(and(eq(learners.organisationId, org), eq(learners.userId, caller.user.id)))
    .orderBy(asc(learners.createdAt))
    .limit(1)
  if (!learner) throw problem(404, 'You are not on this organisation\'s roster yet. Ask your coach to add you.')
  const [lessonList, checkList, states] = await Promise.all([
    learnerLessons(db, org, learner.id),
    learnerChecks(db, org, learner.id),
    jobStatesByLearner(db, org, [learner.id]),
  ])
  return {
    learner,
    cards: await studyCards(db, org, lessonList),
    lessons: lessonList,
    checks: checkList,
    jobs: states.get(learner.id) ?? [],
  }
})
