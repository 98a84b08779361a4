// How a learner's training reads at a glance (shared/utils/person-summary.ts): roster counts,
// upcoming checks with how late they are in calendar days, re-teach reasons, result words, the
// recall chart's series. Fourfold's own wording; dates built in local time like the rules.
import { describe, expect, it } from 'vitest'
import { calendarDaysFrom, checkResultWords, dueInWords, lessonResultWords, recallSeries, reteachWhy, rosterTraining, rosterWords, upcomingChecks } from '../../shared/utils/person-summary'
import { dayStart } from '../../shared/utils/training-status'
import type { PersonJobState } from '../../shared/types/people'
import { worksOffline } from '../../app/utils/offline'

const at = (day: string, hour = 10) => dayStart(day) + hour * 3_600_000
const NOW = at('2026-12-02', 9)

function job(over: Partial<PersonJobState>): PersonJobState {
  return {
    jobId: 'j', jobTitle: 'Job', status: 'ready', words: '', trainedVersionNumber: 1, currentVersionNumber: 1, readySince: at('2026-11-20'),
    nextCheckAt: null, reteachBecause: null, failedCheckAt: null, late: false, overdueCheck: false, targetDate: null, lastLessonId: null, lastCheckId: null, ...over,
  }
}

describe('calendar days and due words', () => {
  it('counts whole local days, whatever the hour', () => {
    expect(calendarDaysFrom(NOW, at('2026-12-02', 23))).toBe(0)
    expect(calendarDaysFrom(NOW, at('2026-12-03', 0))).toBe(1)
    expect(calendarDaysFrom(NOW, at('2026-12-01', 23))).toBe(-1)
    // Across the end of British Summer Time (25 Oct 2026 has 25 hours in Europe/London; any zone gives whole days).
    expect(calendarDaysFrom(at('2026-10-24'), at('2026-10-26'))).toBe(2)
  })

  it('says how soon or how late', () => {
    expect(dueInWords(at('2026-12-02', 18), NOW)).toBe('Due today')
    expect(dueInWords(at('2026-12-03'), NOW)).toBe('Due tomorrow')
    expect(dueInWords(at('2026-12-09'), NOW)).toBe('Due in 7 days')
    expect(dueInWords(at('2026-12-01'), NOW)).toBe('1 day late')
    expect(dueInWords(at('2026-11-21'), NOW)).toBe('11 days late')
  })
})

describe('roster at a glance', () => {
  const jobs = [
    job({ jobId: 'a', status: 'ready', nextCheckAt: at('2026-12-05') }),
    job({ jobId: 'b', status: 'check-due', nextCheckAt: at('2026-11-30'), overdueCheck: true }),
    job({ jobId: 'c', status: 'check-due', nextCheckAt: at('2026-12-02') }),
    job({ jobId: 'd', status: 'reteach', reteachBecause: 'new-version' }),
    job({ jobId: 'e', status: 'late' }),
    job({ jobId: 'f', status: 'in-training' }),
    job({ jobId: 'g', status: 'planned' }),
    job({ jobId: 'h', status: 'not-needed' }),
  ]

  it('counts jobs by state; ready counts the ones with a check due too', () => {
    expect(rosterTraining('L', jobs)).toEqual({ learnerId: 'L', ready: 3, checksDue: 2, overdueChecks: 1, reteach: 1, late: 1, inTraining: 1, planned: 1, nextCheckAt: at('2026-11-30') })
  })

  it('words the most urgent first, each with a tone', () => {
    expect(rosterWords(rosterTraining('L', jobs))).toEqual([
      { text: 'Re-teach 1 job', tone: 'problem' },
      { text: '1 spot check overdue', tone: 'problem' },
      { text: '1 spot check due today', tone: 'attention' },
      { text: 'Late on 1 job', tone: 'problem' },
      { text: 'Ready for 3 jobs', tone: 'done' },
      { text: 'In training on 1 job', tone: 'action' },
      { text: 'Planned for 1 job', tone: 'plain' },
    ])
    expect(rosterWords(rosterTraining('L', []))).toEqual([{ text: 'Nothing planned yet', tone: 'plain' }])
  })
})

describe('upcoming checks', () => {
  it('lists the ready jobs with a next check, soonest first, late ones marked', () => {
    const list = upcomingChecks([
      job({ jobId: 'a', jobTitle: 'Slicer', status: 'ready', nextCheckAt: at('2026-12-05') }),
      job({ jobId: 'b', jobTitle: 'Sealer', status: 'check-due', nextCheckAt: at('2026-11-28'), overdueCheck: true }),
      job({ jobId: 'c', jobTitle: 'Mixer', status: 'reteach', nextCheckAt: null }),
      job({ jobId: 'd', jobTitle: 'Weigher', status: 'in-training' }),
    ], NOW)
    expect(list.map(c => [c.jobTitle, c.words, c.late, c.date])).toEqual([['Sealer', '4 days late', true, '28 Nov'], ['Slicer', 'Due in 3 days', false, '5 Dec']])
  })
})

describe('words', () => {
  it('says why a job is to be re-taught', () => {
    expect(reteachWhy(job({ status: 'reteach', reteachBecause: 'failed-check', failedCheckAt: at('2026-11-29') }), NOW)).toBe('A spot check on 29 Nov asked for re-teaching.')
    expect(reteachWhy(job({ status: 'reteach', reteachBecause: 'new-version', trainedVersionNumber: 1, currentVersionNumber: 3 }), NOW)).toBe('Taught on version 1; version 3 of the breakdown has been published since.')
  })

  it('words lesson and check results', () => {
    expect(lessonResultWords({ signedOffAt: null, decision: null }).text).toBe('Not signed off yet')
    expect(lessonResultWords({ signedOffAt: 1, decision: 'ready' })).toEqual({ text: 'Ready to work alone', tone: 'done' })
    expect(lessonResultWords({ signedOffAt: 1, decision: 'another-pass' }).tone).toBe('attention')
    expect(checkResultWords({ finishedAt: null, outcome: null }).text).toBe('Not finished yet')
    expect(checkResultWords({ finishedAt: 1, outcome: 'reteach' })).toEqual({ text: 'Re-teach needed', tone: 'problem' })
    expect(checkResultWords({ finishedAt: 1, outcome: 'clean' }).tone).toBe('done')
  })
})

describe('recall series', () => {
  it('keeps signed-off lessons with a score, grouped by job, oldest first', () => {
    const base = { versionNumber: 1, startedAt: 0 }
    const series = recallSeries([
      { ...base, id: '3', jobId: 's', jobTitle: 'Slicer', signedOffAt: 30, recall: 94.4 },
      { ...base, id: '1', jobId: 's', jobTitle: 'Slicer', signedOffAt: 10, recall: 88.9 },
      { ...base, id: '2', jobId: 'b', jobTitle: 'Bag sealer', signedOffAt: 20, recall: 100 },
      { ...base, id: '4', jobId: 'b', jobTitle: 'Bag sealer', signedOffAt: null, recall: 50 },
      { ...base, id: '5', jobId: 'b', jobTitle: 'Bag sealer', signedOffAt: 40, recall: null },
    ])
    expect(series.map(s => [s.jobTitle, s.points.map(p => [p.lessonId, p.recall])])).toEqual([
      ['Bag sealer', [['2', 100]]],
      ['Slicer', [['1', 88.9], ['3', 94.4]]],
    ])
  })
})

describe('offline screens', () => {
  it('include a learner\'s study view and its cards, and not the people pages', () => {
    for (const path of ['/study', '/study/', '/study/0b8c1d7e-3f7a-4c55-9d0e-2b1f6a9e4c11']) expect(worksOffline(path), path).toBe(true)
    for (const path of ['/people', '/people/x', '/studying']) expect(worksOffline(path), path).toBe(false)
  })
})
