// Pure rules for working without the server: which screens open offline, when a failed call
// means "no connection" rather than "signed out", how server answers become the tablet's
// reference data, and how the tablet's data state reads in words.
import type { BreakdownContent } from '#shared/schemas/breakdown'
import type { OfflineLearner, OfflineVersion, LocalLesson, LessonStage } from './localdb'
import { clockTime, longDate, sameDay } from './date-words'

/** Screens that work from the tablet alone after one online visit (DESIGN.md §4). */
export function worksOffline(path: string): boolean {
  const clean = path.length > 1 ? path.replace(/\/+$/, '') : path
  return clean === '/' || clean === '/needs-connection' || clean === '/lessons' || clean.startsWith('/lessons/') || clean === '/checks' || clean.startsWith('/checks/')
    // A learner's study cards and records, kept on the device by app/utils/study-cards.ts.
    || clean === '/study' || clean.startsWith('/study/')
}

/** What to call a screen that needs the server, for "… needs a connection". */
export function screenNeedingConnection(path: string): string {
  const parts = path.split('?')[0]!.split('/').filter(Boolean)
  const [first, second, third] = parts
  if (first === 'jobs') return second === undefined ? 'The jobs list' : second === 'new' ? 'Adding a job' : 'This job'
  if (first === 'versions') return third === 'edit' ? 'The breakdown editor' : third === 'print' ? 'The printable breakdown' : 'This breakdown'
  if (first === 'settings') return second === 'members' ? 'Members' : 'Settings'
  if (first === 'plan') return 'The plan'
  if (first === 'account') return 'Your account'
  return 'This screen'
}

/**
 * Whether a failed call means the server could not be reached (no network, a proxy with the
 * server down) rather than a real answer such as 401 signed out. No status: the request never
 * got an answer.
 */
export function serverUnreachable(status: number | undefined): boolean {
  return status === undefined || status === 0 || status >= 500
}

/**
 * How long the tablet may open the offline screens for a member after the server first confirmed
 * them on it: the session's own maximum age (runtimeConfig.session.maxAge, 12 hours), so a tablet
 * left behind does not stay signed in offline longer than it would online.
 */
export const REMEMBER_FOR_MS = 12 * 60 * 60 * 1000

export function rememberedStillValid(since: number | undefined, now: number): boolean {
  return since !== undefined && Number.isFinite(since) && since <= now && now - since < REMEMBER_FOR_MS
}

/** The status of a failed $fetch call, if the server answered at all. */
export function statusOf(error: unknown): number | undefined {
  const e = error as { statusCode?: number, status?: number, response?: { status?: number } } | null
  return e?.response?.status ?? e?.statusCode ?? e?.status ?? undefined
}

/** Every photo a breakdown shows, each once, in reading order. */
export function photoIdsOf(content: BreakdownContent): string[] {
  const ids = new Set<string>()
  for (const unit of content.units) {
    for (const step of unit.steps) {
      if (step.photoId) ids.add(step.photoId)
      for (const kp of step.keyPoints) if (kp.photoId) ids.add(kp.photoId)
    }
  }
  return [...ids]
}

type ApiDate = string | number

/** What GET /api/versions/[id] answers, as far as the tablet keeps it. */
export interface VersionAnswer {
  id: string
  jobId: string
  number: number
  publishedAt: ApiDate | null
  content: BreakdownContent
  job: {
    title: string
    purpose: string
    hazards: Array<{ category: string, description: string }>
    ppe: string[]
    toolsAndMaterials: string[]
    workplaceArrangement: string
    workAreaName: string | null
  }
}

/** One row of GET /api/learners, as far as the tablet keeps it. */
export interface LearnerAnswer { id: string, name: string, reference: string, workAreaName: string | null }

function toTime(value: ApiDate | null): number | null {
  if (value === null) return null
  const time = typeof value === 'number' ? value : Date.parse(value)
  return Number.isFinite(time) ? time : null
}

export function toOfflineVersion(answer: VersionAnswer, organisationId: string): OfflineVersion {
  const { job } = answer
  return {
    id: answer.id,
    jobId: answer.jobId,
    organisationId,
    number: answer.number,
    publishedAt: toTime(answer.publishedAt),
    content: answer.content,
    job: {
      title: job.title,
      purpose: job.purpose,
      hazards: job.hazards.map(h => ({ category: h.category, description: h.description })),
      ppe: [...job.ppe],
      toolsAndMaterials: [...job.toolsAndMaterials],
      workplaceArrangement: job.workplaceArrangement,
      workAreaName: job.workAreaName,
    },
  }
}

export function toOfflineLearner(answer: LearnerAnswer, organisationId: string): OfflineLearner {
  return { id: answer.id, organisationId, name: answer.name, workAreaName: answer.workAreaName, reference: answer.reference }
}

/**
 * The reference data to store: the server's fresh answer, plus whatever a lesson kept on this
 * tablet still points to (a version retired since the lesson began, a learner archived since),
 * so refreshing never leaves a lesson without its breakdown or its learner.
 */
export function keepForLessons(
  fresh: { versions: OfflineVersion[], learners: OfflineLearner[] },
  stored: { versions: OfflineVersion[], learners: OfflineLearner[] },
  lessons: ReadonlyArray<Pick<LocalLesson, 'versionId' | 'learnerId'>>,
): { versions: OfflineVersion[], learners: OfflineLearner[], kept: number } {
  const versionIds = new Set(fresh.versions.map(v => v.id))
  const learnerIds = new Set(fresh.learners.map(l => l.id))
  const wantedVersions = new Set(lessons.map(l => l.versionId))
  const wantedLearners = new Set(lessons.map(l => l.learnerId))
  const keptVersions = stored.versions.filter(v => wantedVersions.has(v.id) && !versionIds.has(v.id))
  const keptLearners = stored.learners.filter(l => wantedLearners.has(l.id) && !learnerIds.has(l.id))
  return {
    versions: [...fresh.versions, ...keptVersions],
    learners: [...fresh.learners, ...keptLearners],
    kept: keptVersions.length + keptLearners.length,
  }
}

/** What the tablet last downloaded for an organisation, kept in Dexie's meta table. */
export interface TabletDataSummary {
  organisationId: string
  /** Published breakdowns downloaded (versions kept for lessons on the tablet are not counted). */
  breakdowns: number
  learners: number
  photos: number
  /** Photos that could not be downloaded this time. */
  photosMissing: number
  at: number
}

/**
 * Opening the app refreshes the tablet data only when it is older than this (or missing):
 * a reload mid-lesson should not start a download. Sync refreshes it whenever the server's change
 * feed shows a breakdown or the roster changed, and "Refresh tablet data" does so at once.
 */
export const REFRESH_AFTER_MS = 10 * 60 * 1000

export function tabletDataStale(summary: Pick<TabletDataSummary, 'at'> | null, now: number): boolean {
  return !summary || now - summary.at >= REFRESH_AFTER_MS || summary.at > now
}

/**
 * Whether a sync, after its pull, downloads the tablet data (breakdowns, photos, roster) again.
 * A later pull says what changed since the last one: a breakdown or the roster changed, download.
 * A tablet's first pull (no cursor yet) lists everything the server holds, which is no news of a
 * change: the download that opening the app starts for stale or missing data (plugins/offline-data)
 * fetches the same, so while that one runs, or once it has finished, a second would fetch it all
 * again. Only a change made in the second or two between that download's list and this first pull
 * waits for the next refresh.
 */
export function pullNeedsDownload(pull: { first: boolean, changed: boolean }, tablet: { downloading: boolean, summary: Pick<TabletDataSummary, 'at'> | null }, now: number): boolean {
  if (!pull.first) return pull.changed
  return !tablet.downloading && tabletDataStale(tablet.summary, now)
}

function plural(n: number, one: string, many: string) {
  return `${n} ${n === 1 ? one : many}`
}

/** "10:42" today, "3 March, 10:42" on another day (the tablet's own clock and time zone). */
export function whenInWords(at: number, now: number): string {
  const when = new Date(at)
  const today = new Date(now)
  const time = clockTime(when)
  if (sameDay(when, today)) return time
  return `${longDate(when, when.getFullYear() !== today.getFullYear())}, ${time}`
}

/** The tablet's data state in words: "Breakdowns on this tablet: 4, updated 10:42". */
export function tabletDataWords(summary: TabletDataSummary | null, now: number): string[] {
  if (!summary) return ['Nothing downloaded to this tablet yet.']
  const lines = [
    `Breakdowns on this tablet: ${summary.breakdowns}, updated ${whenInWords(summary.at, now)}`,
    `People on the roster: ${summary.learners}. Photos: ${summary.photos}.`,
  ]
  if (summary.photosMissing) lines.push(`${plural(summary.photosMissing, 'photo', 'photos')} could not be downloaded; the next refresh tries again.`)
  return lines
}

/** The four stages in the coach's words (DESIGN.md §3). */
export const LESSON_STAGE_WORDS: Record<LessonStage, string> = {
  prepare: 'Prepare the worker',
  present: 'Present the operation',
  tryout: 'Try-out performance',
  followup: 'Follow up',
}
