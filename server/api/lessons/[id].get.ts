// One lesson with its marks (a second observer's too) and score. Coaches, admins and auditors; a learner sees their own.
import { and, asc, eq } from 'drizzle-orm'
import { breakdownVersions, jobs, learners, lessonEvents, lessonScores, lessons, users } from '../../db/schema'
import { idParamsSchema } from '../../../shared/schemas/common'
import { focusContent } from '../../../shared/utils/refresher'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireSignedIn(event)
  const db = await useDb()
  const org = caller.organisation.id
  const [row] = await db.select({
    lesson: lessons,
    learnerName: learners.name,
    learnerUserId: learners.userId,
    jobTitle: jobs.title,
    // The review names the preparation items the way the runner listed them (prepareItems).
    jobPurpose: jobs.purpose,
    toolsAndMaterials: jobs.toolsAndMaterials,
    workplaceArrangement: jobs.workplaceArrangement,
    versionNumber: breakdownVersions.number,
    content: breakdownVersions.content,
    coachName: users.name,
  }).from(lessons)
    .innerJoin(learners, eq(learners.id, lessons.learnerId))
    .innerJoin(jobs, eq(jobs.id, lessons.jobId))
    .innerJoin(breakdownVersions, eq(breakdownVersions.id, lessons.versionId))
    .leftJoin(users, eq(users.id, lessons.coachUserId))
    .where(and(eq(lessons.id, id), eq(lessons.organisationId, org)))
    .limit(1)
  if (!row) throw notFound('That lesson')
  assertMayReadLearner(caller, row.learnerUserId, 'lessons')
  const [score] = await db.select().from(lessonScores).where(and(eq(lessonScores.lessonId, id), eq(lessonScores.organisationId, org)))
  const marks = await db.select({
    id: lessonEvents.id, pass: lessonEvents.pass, elementId: lessonEvents.elementId, kind: lessonEvents.kind, value: lessonEvents.value,
    clientTime: lessonEvents.clientTime, deviceId: lessonEvents.deviceId, seq: lessonEvents.seq,
  }).from(lessonEvents).where(and(eq(lessonEvents.lessonId, id), eq(lessonEvents.organisationId, org))).orderBy(asc(lessonEvents.clientTime), asc(lessonEvents.deviceId), asc(lessonEvents.seq))
  const { organisationId: _org, ...lesson } = row.lesson
  return {
    ...lesson,
    learnerName: row.learnerName,
    jobTitle: row.jobTitle,
    job: { purpose: row.jobPurpose, toolsAndMaterials: row.toolsAndMaterials, workplaceArrangement: row.workplaceArrangement },
    versionNumber: row.versionNumber,
    coachName: row.coachName,
    // A refresher worked on (and was scored on) only its focused elements: the review shows those.
    content: focusContent(row.content, row.lesson.focus),
    events: marks,
    score: score ? { t1: score.t1, t2: score.t2, t3: score.t3, t4: score.t4, order: score.orderScore, recall: score.recall, readiness: score.readiness, represent: score.represent, computedAt: score.computedAt } : null,
  }
})
