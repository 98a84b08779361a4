// Coverage per job and per work area (DESIGN.md §3 "coverage"); Fourfold's own rule: ready now is
// 'ready' or 'check-due', and a job's surplus never fills another job's gap.
import { describe, expect, it } from 'vitest'
import { coverageByJob, coverageByWorkArea, coverageWords } from '../../shared/utils/coverage'
import type { CellStatus } from '../../shared/types/plan'

const cells = (jobId: string, ...statuses: CellStatus[]) => statuses.map(status => ({ jobId, status }))

describe('coverage per job', () => {
  it('counts ready and check-due as ready now; re-teach, in training, late and planned do not count', () => {
    const [slicer] = coverageByJob([{ jobId: 'slicer', workAreaId: 'slicing', needed: 3 }], [
      ...cells('slicer', 'ready', 'check-due', 'reteach', 'in-training', 'late', 'planned', 'not-needed'),
      ...cells('other', 'ready', 'ready'),
    ])
    expect(slicer).toEqual({ jobId: 'slicer', workAreaId: 'slicing', readyNow: 2, needed: 3, gap: 1 })
    expect(coverageWords(slicer!)).toBe('2 of 3 ready — 1 short')
  })

  it('has no gap when enough are ready, and a job with no cells is short by all it needs', () => {
    const [full, empty, none] = coverageByJob([
      { jobId: 'a', workAreaId: null, needed: 2 },
      { jobId: 'b', workAreaId: null, needed: 2 },
      { jobId: 'c', workAreaId: null, needed: 0 },
    ], cells('a', 'ready', 'ready', 'ready'))
    expect(full).toMatchObject({ readyNow: 3, gap: 0 })
    expect(coverageWords(full!)).toBe('3 of 2 ready')
    expect(empty).toMatchObject({ readyNow: 0, gap: 2 })
    expect(coverageWords(empty!)).toBe('0 of 2 ready — 2 short')
    expect(coverageWords(none!)).toBe('None needed')
  })
})

describe('coverage per work area', () => {
  it('sums the jobs of each area, counting each job only up to what it needs', () => {
    const jobs = coverageByJob([
      { jobId: 'blade', workAreaId: 'slicing', needed: 2 },
      { jobId: 'film', workAreaId: 'slicing', needed: 3 },
      { jobId: 'grease', workAreaId: 'maintenance', needed: 1 },
      { jobId: 'sweep', workAreaId: null, needed: 1 },
    ], [...cells('blade', 'ready', 'ready', 'ready', 'ready'), ...cells('film', 'check-due'), ...cells('grease', 'ready')])
    const areas = coverageByWorkArea(jobs)
    expect(areas).toEqual([
      // 4 ready on the blade job count as 2: the film job is still 2 short.
      { workAreaId: 'slicing', jobs: 2, jobsWithGap: 1, readyNow: 3, needed: 5, gap: 2 },
      { workAreaId: 'maintenance', jobs: 1, jobsWithGap: 0, readyNow: 1, needed: 1, gap: 0 },
      { workAreaId: null, jobs: 1, jobsWithGap: 1, readyNow: 0, needed: 1, gap: 1 },
    ])
  })
})
