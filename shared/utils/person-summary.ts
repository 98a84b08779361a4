// How a learner's training reads at a glance and in words: counts by state for the roster, the
// upcoming spot checks with how late they are, the jobs they are ready for and those to re-teach.
// Pure, so the people pages, the study view (offline too) and the roster route agree.
import type { PersonJobState, RosterTraining } from '../types/people'
import { isReadyNow, shortDate, startOfDay } from './training-status'

export function rosterTraining(learnerId: string, jobs: readonly PersonJobState[]): RosterTraining {
  const count = (test: (j: PersonJobState) => boolean) => jobs.filter(test).length
  const due = jobs.filter(j => isReadyNow(j.status) && j.nextCheckAt !== null).map(j => j.nextCheckAt!)
  return {
    learnerId,
    ready: count(j => isReadyNow(j.status)),
    checksDue: count(j => j.status === 'check-due'),
    overdueChecks: count(j => j.status === 'check-due' && j.overdueCheck),
    reteach: count(j => j.status === 'reteach'),
    late: count(j => j.status === 'late'),
    inTraining: count(j => j.status === 'in-training'),
    planned: count(j => j.status === 'planned'),
    nextCheckAt: due.length ? Math.min(...due) : null,
  }
}

/** The same tones as app/utils/breakdown-words.ts TONE_CLASSES. */
export type SummaryTone = 'done' | 'attention' | 'problem' | 'plain' | 'action'

const plural = (n: number, one: string, many: string) => `${n} ${n === 1 ? one : many}`

/** The roster line: only the states a learner has, most urgent first, each in words with a tone. */
export function rosterWords(t: RosterTraining): Array<{ text: string, tone: SummaryTone }> {
  const out: Array<{ text: string, tone: SummaryTone }> = []
  if (t.reteach) out.push({ text: `Re-teach ${plural(t.reteach, 'job', 'jobs')}`, tone: 'problem' })
  if (t.overdueChecks) out.push({ text: `${plural(t.overdueChecks, 'spot check', 'spot checks')} overdue`, tone: 'problem' })
  if (t.checksDue - t.overdueChecks > 0) out.push({ text: `${plural(t.checksDue - t.overdueChecks, 'spot check', 'spot checks')} due today`, tone: 'attention' })
  if (t.late) out.push({ text: `Late on ${plural(t.late, 'job', 'jobs')}`, tone: 'problem' })
  if (t.ready) out.push({ text: `Ready for ${plural(t.ready, 'job', 'jobs')}`, tone: 'done' })
  if (t.inTraining) out.push({ text: `In training on ${plural(t.inTraining, 'job', 'jobs')}`, tone: 'action' })
  if (t.planned) out.push({ text: `Planned for ${plural(t.planned, 'job', 'jobs')}`, tone: 'plain' })
  if (!out.length) out.push({ text: 'Nothing planned yet', tone: 'plain' })
  return out
}

const DAY = 86_400_000

/** Whole calendar days from the start of today to the start of `at`'s day (negative: in the past). */
export function calendarDaysFrom(now: number, at: number): number {
  // Rounded: a day with a clock change is 23 or 25 hours long.
  return Math.round((startOfDay(at) - startOfDay(now)) / DAY)
}

/** "Due today", "Due tomorrow", "Due in 3 days", "1 day late", "12 days late". */
export function dueInWords(at: number, now: number): string {
  const days = calendarDaysFrom(now, at)
  if (days === 0) return 'Due today'
  if (days === 1) return 'Due tomorrow'
  if (days > 1) return `Due in ${days} days`
  return `${plural(-days, 'day', 'days')} late`
}

export interface UpcomingCheck { jobId: string, jobTitle: string, dueAt: number, late: boolean, words: string, date: string }

/** The spot checks still to come for the jobs a learner is ready for, soonest first. */
export function upcomingChecks(jobs: readonly PersonJobState[], now: number): UpcomingCheck[] {
  return jobs
    .filter(j => isReadyNow(j.status) && j.nextCheckAt !== null)
    .map(j => ({ jobId: j.jobId, jobTitle: j.jobTitle, dueAt: j.nextCheckAt!, late: calendarDaysFrom(now, j.nextCheckAt!) < 0, words: dueInWords(j.nextCheckAt!, now), date: shortDate(j.nextCheckAt!, now) }))
    .sort((a, b) => a.dueAt - b.dueAt || a.jobTitle.localeCompare(b.jobTitle))
}

/** Why a job is flagged for re-teaching, in words. */
export function reteachWhy(job: PersonJobState, now: number): string {
  if (job.reteachBecause === 'failed-check') return job.failedCheckAt ? `A spot check on ${shortDate(job.failedCheckAt, now)} asked for re-teaching.` : 'A spot check asked for re-teaching.'
  if (job.reteachBecause === 'new-version') return `Taught on version ${job.trainedVersionNumber}; version ${job.currentVersionNumber} of the breakdown has been published since.`
  return ''
}

/** A spot check's result in words (the outcome rule is shared/utils/spot-check-schedule.ts checkOutcome). */
export const CHECK_OUTCOME_WORDS: Record<'clean' | 'stay' | 'reteach', string> = {
  clean: 'Clean: everything unaided',
  stay: 'Needed some help',
  reteach: 'Re-teach needed',
}

export const CHECK_OUTCOME_TONES: Record<'clean' | 'stay' | 'reteach', SummaryTone> = { clean: 'done', stay: 'attention', reteach: 'problem' }

export function checkResultWords(check: { finishedAt: number | null, outcome: 'clean' | 'stay' | 'reteach' | null }): { text: string, tone: SummaryTone } {
  if (check.finishedAt === null) return { text: 'Not finished yet', tone: 'plain' }
  if (!check.outcome) return { text: 'Finished, result not worked out yet', tone: 'plain' }
  return { text: CHECK_OUTCOME_WORDS[check.outcome], tone: CHECK_OUTCOME_TONES[check.outcome] }
}

/** A lesson's result in words: the coach's decision, or where it stands. */
export function lessonResultWords(lesson: { signedOffAt: number | null, decision: 'ready' | 'another-pass' | null }): { text: string, tone: SummaryTone } {
  if (lesson.signedOffAt === null) return { text: 'Not signed off yet', tone: 'plain' }
  if (lesson.decision === 'ready') return { text: 'Ready to work alone', tone: 'done' }
  if (lesson.decision === 'another-pass') return { text: 'Another lesson needed', tone: 'attention' }
  return { text: 'Signed off, no decision recorded', tone: 'plain' }
}

/** Points for the recall chart: signed-off lessons with a recall score, oldest first, grouped by job. */
export function recallSeries(lessons: ReadonlyArray<{ id: string, jobId: string, jobTitle: string, signedOffAt: number | null, startedAt: number, recall: number | null, versionNumber: number }>) {
  const byJob = new Map<string, { jobId: string, jobTitle: string, points: Array<{ lessonId: string, at: number, recall: number, versionNumber: number }> }>()
  for (const l of lessons) {
    if (l.recall === null || l.signedOffAt === null) continue
    const series = byJob.get(l.jobId) ?? { jobId: l.jobId, jobTitle: l.jobTitle, points: [] }
    series.points.push({ lessonId: l.id, at: l.signedOffAt, recall: l.recall, versionNumber: l.versionNumber })
    byJob.set(l.jobId, series)
  }
  const out = [...byJob.values()]
  for (const s of out) s.points.sort((a, b) => a.at - b.at)
  return out.sort((a, b) => a.jobTitle.localeCompare(b.jobTitle))
}
