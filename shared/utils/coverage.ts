// Coverage (DESIGN.md §3): per job, the people ready now against the number the job needs
// (jobs.coverage_target), and the same summed per work area. Ready now means the cell's status is
// 'ready' or 'check-due' (a spot check being due does not stop anyone working); someone flagged
// for re-teaching — a failed check or a newer version — is not counted, nor anyone in training.
import type { CellStatus } from '../types/plan'
import { isReadyNow } from './training-status'

export interface CoverageJobInput { jobId: string, workAreaId: string | null, needed: number }
export interface JobCoverage { jobId: string, workAreaId: string | null, readyNow: number, needed: number, gap: number }
export interface WorkAreaCoverage {
  workAreaId: string | null
  jobs: number
  jobsWithGap: number
  /** people ready now, each job counted up to what it needs (a surplus on one job fills no gap on another) */
  readyNow: number
  needed: number
  gap: number
}

export function coverageByJob(jobs: readonly CoverageJobInput[], cells: ReadonlyArray<{ jobId: string, status: CellStatus }>): JobCoverage[] {
  const ready = new Map<string, number>()
  for (const cell of cells) if (isReadyNow(cell.status)) ready.set(cell.jobId, (ready.get(cell.jobId) ?? 0) + 1)
  return jobs.map((job) => {
    const readyNow = ready.get(job.jobId) ?? 0
    return { jobId: job.jobId, workAreaId: job.workAreaId, readyNow, needed: job.needed, gap: Math.max(0, job.needed - readyNow) }
  })
}

/** One line per work area that has jobs, in the order the jobs first name them (null: no work area). */
export function coverageByWorkArea(jobs: readonly JobCoverage[]): WorkAreaCoverage[] {
  const areas = new Map<string | null, WorkAreaCoverage>()
  for (const job of jobs) {
    let area = areas.get(job.workAreaId)
    if (!area) {
      area = { workAreaId: job.workAreaId, jobs: 0, jobsWithGap: 0, readyNow: 0, needed: 0, gap: 0 }
      areas.set(job.workAreaId, area)
    }
    area.jobs += 1
    area.needed += job.needed
    area.readyNow += Math.min(job.readyNow, job.needed)
    area.gap += job.gap
    if (job.gap > 0) area.jobsWithGap += 1
  }
  return [...areas.values()]
}

/** "2 of 3 ready — 1 short", "3 of 2 ready", "None needed". */
export function coverageWords(c: { readyNow: number, needed: number, gap: number }): string {
  if (c.needed === 0) return c.readyNow ? `${c.readyNow} ready, none needed` : 'None needed'
  const base = `${c.readyNow} of ${c.needed} ready`
  return c.gap > 0 ? `${base} — ${c.gap} short` : base
}
