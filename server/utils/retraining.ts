// Who is trained on an older published version of a job than the current one (DESIGN.md §8,
// "Retraining"), from the one derived training state (trainingRows), with what changed between
// the two versions and the element ids a refresher teaches. One diff per pair of versions.
import { and, eq, inArray } from 'drizzle-orm'
import { breakdownVersions, jobs, learners } from '../db/schema'
import type { BreakdownContent } from '../../shared/schemas/breakdown'
import { MAX_FOCUS, type RetrainingEntry } from '../../shared/types/retraining'
import { changedElementIds, changeLines } from '../../shared/utils/refresher-changes'

const CHUNK = 500

async function inChunks<T>(ids: string[], read: (chunk: string[]) => Promise<T[]>): Promise<T[]> {
  const out: T[] = []
  for (let i = 0; i < ids.length; i += CHUNK) out.push(...await read(ids.slice(i, i + CHUNK)))
  return out
}

/** Everyone of the organisation trained on an older version (of the given jobs, or of every job), by job title then name. */
export async function retrainingEntries(organisationId: string, jobIds?: string[], now = Date.now()): Promise<RetrainingEntry[]> {
  const rows = (await trainingRows(organisationId, jobIds ? { jobIds } : undefined, now)).filter(r =>
    r.readySince != null && r.trainedVersionId && r.trainedVersionNumber != null
    && r.currentVersionId && r.currentVersionNumber != null && r.trainedVersionNumber < r.currentVersionNumber)
  if (!rows.length) return []
  const db = await useDb()
  const versionIds = [...new Set(rows.flatMap(r => [r.trainedVersionId!, r.currentVersionId!]))]
  const learnerIds = [...new Set(rows.map(r => r.learnerId))]
  const rowJobIds = [...new Set(rows.map(r => r.jobId))]
  const [versions, people, jobRows] = await Promise.all([
    inChunks(versionIds, chunk => db.select({ id: breakdownVersions.id, content: breakdownVersions.content }).from(breakdownVersions)
      .where(and(eq(breakdownVersions.organisationId, organisationId), inArray(breakdownVersions.id, chunk)))),
    inChunks(learnerIds, chunk => db.select({ id: learners.id, name: learners.name, archivedAt: learners.archivedAt }).from(learners)
      .where(and(eq(learners.organisationId, organisationId), inArray(learners.id, chunk)))),
    inChunks(rowJobIds, chunk => db.select({ id: jobs.id, title: jobs.title, archivedAt: jobs.archivedAt }).from(jobs)
      .where(and(eq(jobs.organisationId, organisationId), inArray(jobs.id, chunk)))),
  ])
  const content = new Map(versions.map(v => [v.id, v.content as BreakdownContent]))
  const learnerById = new Map(people.map(l => [l.id, l]))
  const jobById = new Map(jobRows.map(j => [j.id, j]))
  const diffs = new Map<string, Pick<RetrainingEntry, 'changes' | 'focus'>>()
  const diffOf = (olderId: string, newerId: string) => {
    const key = `${olderId}:${newerId}`
    let d = diffs.get(key)
    if (!d) {
      const older = content.get(olderId)!
      const newer = content.get(newerId)!
      const focus = changedElementIds(older, newer)
      d = { changes: changeLines(older, newer), focus: focus.length && focus.length <= MAX_FOCUS ? focus : null }
      diffs.set(key, d)
    }
    return d
  }

  const out: RetrainingEntry[] = []
  for (const r of rows) {
    const learner = learnerById.get(r.learnerId)
    const job = jobById.get(r.jobId)
    // Archived people and jobs are not taught again; a version row missing would be a broken row, not a person to flag.
    if (!learner || learner.archivedAt || !job || job.archivedAt || !content.has(r.trainedVersionId!) || !content.has(r.currentVersionId!)) continue
    out.push({
      learnerId: r.learnerId,
      learnerName: learner.name,
      jobId: r.jobId,
      jobTitle: job.title,
      trainedVersion: { id: r.trainedVersionId!, number: r.trainedVersionNumber! },
      currentVersion: { id: r.currentVersionId!, number: r.currentVersionNumber! },
      readySince: r.readySince,
      ...diffOf(r.trainedVersionId!, r.currentVersionId!),
    })
  }
  return out.sort((a, b) => a.jobTitle.localeCompare(b.jobTitle, 'en-GB') || a.learnerName.localeCompare(b.learnerName, 'en-GB') || a.learnerId.localeCompare(b.learnerId))
}
