// What the people pages and a learner's own study view read about one learner: their lessons with
// the server's scores, their spot checks with outcomes, and their training state per job (the one
// rule, through trainingRows). Every query is scoped to the organisation the caller belongs to.
import { and, asc, eq, inArray, ne } from 'drizzle-orm'
import { breakdownVersions, jobs, lessonScores, lessons, spotChecks, users, workAreas } from '../db/schema'
import type { HistoryCheck, HistoryLesson, PersonJobState, StudyCard } from '../../shared/types/people'
import { trainingRows, type TrainingRow } from './training-state'

type Reader = Pick<Db, 'select'>

const ms = (d: Date | null) => (d ? d.getTime() : null)

/** The learner's lessons, oldest first, with the recall score the server computed at sync. */
export async function learnerLessons(db: Reader, organisationId: string, learnerId: string): Promise<HistoryLesson[]> {
  const rows = await db.select({
    id: lessons.id, jobId: lessons.jobId, jobTitle: jobs.title, versionId: lessons.versionId, versionNumber: breakdownVersions.number,
    coachName: users.name, startedAt: lessons.startedAt, signedOffAt: lessons.signedOffAt, decision: lessons.decision, focus: lessons.focus,
    recall: lessonScores.recall, readiness: lessonScores.readiness,
  }).from(lessons)
    .innerJoin(jobs, and(eq(jobs.id, lessons.jobId), eq(jobs.organisationId, organisationId)))
    .innerJoin(breakdownVersions, and(eq(breakdownVersions.id, lessons.versionId), eq(breakdownVersions.organisationId, organisationId)))
    .leftJoin(lessonScores, and(eq(lessonScores.lessonId, lessons.id), eq(lessonScores.organisationId, organisationId)))
    .leftJoin(users, eq(users.id, lessons.coachUserId))
    .where(and(eq(lessons.organisationId, organisationId), eq(lessons.learnerId, learnerId)))
    .orderBy(asc(lessons.startedAt), asc(lessons.id))
  return rows.map(({ focus, ...r }) => ({
    ...r,
    startedAt: r.startedAt.getTime(),
    signedOffAt: ms(r.signedOffAt),
    recall: r.recall ?? null,
    readiness: r.readiness ?? null,
    refresher: focus !== null,
  }))
}

/** The learner's spot checks, oldest first; unfinished ones have no outcome yet. */
export async function learnerChecks(db: Reader, organisationId: string, learnerId: string): Promise<HistoryCheck[]> {
  const rows = await db.select({
    id: spotChecks.id, jobId: spotChecks.jobId, jobTitle: jobs.title, versionNumber: breakdownVersions.number, coachName: users.name,
    startedAt: spotChecks.startedAt, finishedAt: spotChecks.finishedAt, outcome: spotChecks.outcome, nextDueAt: spotChecks.nextDueAt,
  }).from(spotChecks)
    .innerJoin(jobs, and(eq(jobs.id, spotChecks.jobId), eq(jobs.organisationId, organisationId)))
    .innerJoin(breakdownVersions, and(eq(breakdownVersions.id, spotChecks.versionId), eq(breakdownVersions.organisationId, organisationId)))
    .leftJoin(users, eq(users.id, spotChecks.coachUserId))
    .where(and(eq(spotChecks.organisationId, organisationId), eq(spotChecks.learnerId, learnerId)))
    .orderBy(asc(spotChecks.startedAt), asc(spotChecks.id))
  return rows.map(r => ({ ...r, startedAt: r.startedAt.getTime(), finishedAt: ms(r.finishedAt), nextDueAt: r.nextDueAt ?? null }))
}

/** Titles of the organisation's jobs that are not archived, by id. */
async function liveJobTitles(db: Reader, organisationId: string, jobIds: string[]): Promise<Map<string, string>> {
  if (!jobIds.length) return new Map()
  const rows = await db.select({ id: jobs.id, title: jobs.title, archivedAt: jobs.archivedAt }).from(jobs)
    .where(and(eq(jobs.organisationId, organisationId), inArray(jobs.id, [...new Set(jobIds)])))
  return new Map(rows.filter(r => !r.archivedAt).map(r => [r.id, r.title]))
}

export function toJobState(row: TrainingRow, jobTitle: string): PersonJobState {
  return {
    jobId: row.jobId,
    jobTitle,
    status: row.status,
    words: row.words,
    trainedVersionNumber: row.trainedVersionNumber,
    currentVersionNumber: row.currentVersionNumber,
    readySince: row.readySince,
    nextCheckAt: row.nextCheckAt,
    reteachBecause: row.reteachBecause,
    failedCheckAt: row.failedCheckAt,
    late: row.late,
    overdueCheck: row.overdueCheck,
    targetDate: row.planItem?.targetDate ?? null,
    lastLessonId: row.lastLessonId,
    lastCheckId: row.lastCheckId,
  }
}

/** The training state of every learner × job pair of these learners (all learners when none are named); archived jobs left out. */
export async function jobStatesByLearner(db: Reader, organisationId: string, learnerIds?: string[], now = Date.now()): Promise<Map<string, PersonJobState[]>> {
  const rows = await trainingRows(organisationId, learnerIds ? { learnerIds } : undefined, now)
  const titles = await liveJobTitles(db, organisationId, rows.map(r => r.jobId))
  const out = new Map<string, PersonJobState[]>()
  for (const row of rows) {
    const title = titles.get(row.jobId)
    if (title === undefined) continue
    const list = out.get(row.learnerId) ?? []
    list.push(toJobState(row, title))
    out.set(row.learnerId, list)
  }
  for (const list of out.values()) list.sort((a, b) => a.jobTitle.localeCompare(b.jobTitle))
  return out
}

/**
 * The breakdowns a learner is trained on, as study cards. Trained on a job = at least one
 * signed-off lesson on it (whatever the decision: what was taught may be studied). The card is the
 * version of the latest signed-off lesson; when the job has a newer published version it is named,
 * not shown (it has not been taught yet). Drafts never appear (a lesson cannot be pinned to one, and
 * the filter says so again), nor archived jobs.
 */
export async function studyCards(db: Reader, organisationId: string, lessonList: HistoryLesson[]): Promise<StudyCard[]> {
  const latest = new Map<string, HistoryLesson & { signedOffAt: number }>()
  for (const l of lessonList) {
    if (l.signedOffAt === null) continue
    const before = latest.get(l.jobId)
    if (!before || l.signedOffAt > before.signedOffAt || (l.signedOffAt === before.signedOffAt && l.id > before.id)) latest.set(l.jobId, { ...l, signedOffAt: l.signedOffAt })
  }
  if (!latest.size) return []
  const versionIds = [...latest.values()].map(l => l.versionId)
  const taught = await db.select({
    id: breakdownVersions.id, number: breakdownVersions.number, content: breakdownVersions.content, jobId: jobs.id, title: jobs.title,
    purpose: jobs.purpose, hazards: jobs.hazards, ppe: jobs.ppe, toolsAndMaterials: jobs.toolsAndMaterials,
    workplaceArrangement: jobs.workplaceArrangement, archivedAt: jobs.archivedAt, workAreaName: workAreas.name,
  }).from(breakdownVersions)
    .innerJoin(jobs, and(eq(jobs.id, breakdownVersions.jobId), eq(jobs.organisationId, organisationId)))
    .leftJoin(workAreas, and(eq(workAreas.id, jobs.workAreaId), eq(workAreas.organisationId, organisationId)))
    .where(and(eq(breakdownVersions.organisationId, organisationId), inArray(breakdownVersions.id, versionIds), ne(breakdownVersions.status, 'draft')))
  const current = await db.select({ jobId: breakdownVersions.jobId, number: breakdownVersions.number, publishedAt: breakdownVersions.publishedAt })
    .from(breakdownVersions)
    .where(and(eq(breakdownVersions.organisationId, organisationId), inArray(breakdownVersions.jobId, [...latest.keys()]), eq(breakdownVersions.status, 'published')))
  const currentByJob = new Map(current.map(c => [c.jobId, c]))
  return taught
    .filter(v => !v.archivedAt)
    .map((v) => {
      const lesson = latest.get(v.jobId)!
      const now = currentByJob.get(v.jobId)
      return {
        versionId: v.id,
        versionNumber: v.number,
        jobId: v.jobId,
        jobTitle: v.title,
        job: { purpose: v.purpose, hazards: v.hazards, ppe: v.ppe, toolsAndMaterials: v.toolsAndMaterials, workplaceArrangement: v.workplaceArrangement, workAreaName: v.workAreaName ?? null },
        content: v.content,
        taughtAt: lesson.signedOffAt,
        lessonId: lesson.id,
        newer: now && now.number > v.number ? { number: now.number, publishedAt: ms(now.publishedAt) } : null,
      }
    })
    .sort((a, b) => a.jobTitle.localeCompare(b.jobTitle))
}
