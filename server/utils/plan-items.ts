// Plan items (one learner × job need): the organisation check both plan write routes share, and the
// cell as the matrix shows it after a change.
import { and, eq } from 'drizzle-orm'
import { jobs, learners } from '../db/schema'
import type { PlanCell } from '../../shared/types/plan-matrix'

type Reader = Pick<Db, 'select'>

/** Both ids must name a learner and a job of the caller's organisation (404 otherwise, whoever owns them). */
export async function planCellOwners(db: Reader, organisationId: string, learnerId: string, jobId: string) {
  const [learner] = await db.select({ id: learners.id, name: learners.name, archivedAt: learners.archivedAt }).from(learners)
    .where(and(eq(learners.id, learnerId), eq(learners.organisationId, organisationId))).limit(1)
  if (!learner) throw notFound('That learner')
  const [job] = await db.select({ id: jobs.id, title: jobs.title, archivedAt: jobs.archivedAt }).from(jobs)
    .where(and(eq(jobs.id, jobId), eq(jobs.organisationId, organisationId))).limit(1)
  if (!job) throw notFound('That job')
  return { learner, job }
}

/** A training row in the matrix's shape; no row is "not needed". */
export function toPlanCell(learnerId: string, jobId: string, row: TrainingRow | undefined): PlanCell {
  return {
    learnerId,
    jobId,
    status: row?.status ?? 'not-needed',
    words: row?.words ?? 'Not needed',
    planItemId: row?.planItem?.id ?? null,
    targetDate: row?.planItem?.targetDate ?? null,
    reason: row?.planItem?.reason ?? null,
    note: row?.planItem?.note ?? '',
    late: row?.late ?? false,
    readySince: row?.readySince ?? null,
    nextCheckAt: row?.nextCheckAt ?? null,
    overdueCheck: row?.overdueCheck ?? false,
    trainedVersionNumber: row?.trainedVersionNumber ?? null,
    reteachBecause: row?.reteachBecause ?? null,
  }
}

/** The derived cell of one learner × job after a change. */
export async function planCellOf(organisationId: string, learnerId: string, jobId: string, now = Date.now()): Promise<PlanCell> {
  const [row] = await trainingRows(organisationId, { learnerIds: [learnerId], jobIds: [jobId] }, now)
  return toPlanCell(learnerId, jobId, row)
}
