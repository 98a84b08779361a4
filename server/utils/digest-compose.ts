// What goes into each person's reminder digest (issue 6, item 7). Pure: the loader in digest.ts
// gathers the facts, this decides who is told what, and the mail template words it.
//
// Who is told what:
// - A spot check due (or overdue) goes to the coach who last worked with that learner on that
//   job: the coach of the newer of the latest signed-off lesson and the latest finished spot
//   check. If that person is no longer a coach or admin here, the coach of the other one; if
//   neither is, the check has nobody, and every admin is told it under "no coach".
// - A plan item past its target date and not ready is the organisation's business, so every
//   coach and admin is told it (the plan is one shared timetable).
// - Only coaches and admins with the digest turned on get one; a person who turned it off is
//   skipped, and their checks are not handed to anyone else (they still show on Today).
// - Nothing to say, no digest.
import type { Role } from '../../shared/types/roles'

export const DIGEST_ROLES = ['admin', 'coach'] as const satisfies readonly Role[]

export interface DigestMember { userId: string, name: string, email: string, role: Role, digestEmails: boolean }

/** The coach of a lesson or a spot check and when it happened (sign-off or finish, ms). */
export interface CoachedAt { coachUserId: string | null, at: number }

export interface DueCheckFact {
  learnerId: string
  learnerName: string
  jobId: string
  jobTitle: string
  nextCheckAt: number
  overdue: boolean
  lastLesson: CoachedAt | null
  lastCheck: CoachedAt | null
}

export interface LatePlanFact {
  learnerId: string
  learnerName: string
  jobId: string
  jobTitle: string
  /** YYYY-MM-DD */
  targetDate: string
  progress: 'not-started' | 'in-training' | 'reteach'
}

export interface DigestCheck { learnerName: string, jobTitle: string, nextCheckAt: number, overdue: boolean }
export interface DigestLate { learnerName: string, jobTitle: string, targetDate: string, progress: LatePlanFact['progress'] }

export interface Digest {
  member: DigestMember
  checks: DigestCheck[]
  /** Checks whose coaches are all gone: only in admins' digests. */
  unassignedChecks: DigestCheck[]
  late: DigestLate[]
}

/** The coach and admin user ids who may be told about a check (their role, not their setting). */
function coachesOf(members: readonly DigestMember[]): Set<string> {
  return new Set(members.filter(m => (DIGEST_ROLES as readonly Role[]).includes(m.role)).map(m => m.userId))
}

/** Whose check it is: the coach of the newer of the two, else of the older, else nobody (null). */
export function responsibleCoach(fact: Pick<DueCheckFact, 'lastLesson' | 'lastCheck'>, coaches: ReadonlySet<string>): string | null {
  const candidates = [fact.lastLesson, fact.lastCheck]
    .filter((c): c is CoachedAt => c !== null)
    // A check and a lesson at the same instant: the check is the later word on the learner.
    .sort((a, b) => b.at - a.at || (a === fact.lastCheck ? -1 : 1))
  return candidates.find(c => c.coachUserId !== null && coaches.has(c.coachUserId))?.coachUserId ?? null
}

const byCheckDate = (a: DigestCheck, b: DigestCheck) => a.nextCheckAt - b.nextCheckAt || a.learnerName.localeCompare(b.learnerName) || a.jobTitle.localeCompare(b.jobTitle)
const byTargetDate = (a: DigestLate, b: DigestLate) => a.targetDate.localeCompare(b.targetDate) || a.learnerName.localeCompare(b.learnerName) || a.jobTitle.localeCompare(b.jobTitle)

/** One digest per coach or admin who has the digest on and something to be told; others get none. */
export function composeDigests(members: readonly DigestMember[], checks: readonly DueCheckFact[], late: readonly LatePlanFact[]): Digest[] {
  const coaches = coachesOf(members)
  const mine = new Map<string, DigestCheck[]>()
  const unassigned: DigestCheck[] = []
  for (const fact of checks) {
    const item: DigestCheck = { learnerName: fact.learnerName, jobTitle: fact.jobTitle, nextCheckAt: fact.nextCheckAt, overdue: fact.overdue }
    const coach = responsibleCoach(fact, coaches)
    if (coach === null) {
      unassigned.push(item)
      continue
    }
    const list = mine.get(coach) ?? []
    list.push(item)
    mine.set(coach, list)
  }
  const lateItems = late.map(({ learnerName, jobTitle, targetDate, progress }) => ({ learnerName, jobTitle, targetDate, progress })).sort(byTargetDate)
  unassigned.sort(byCheckDate)

  const digests: Digest[] = []
  for (const member of members) {
    if (!member.digestEmails || !coaches.has(member.userId)) continue
    const digest: Digest = {
      member,
      checks: (mine.get(member.userId) ?? []).sort(byCheckDate),
      unassignedChecks: member.role === 'admin' ? unassigned : [],
      late: lateItems,
    }
    if (digest.checks.length || digest.unassignedChecks.length || digest.late.length) digests.push(digest)
  }
  return digests
}

// ---- When the scheduled run sends ----------------------------------------------------------

export const DEFAULT_DIGEST_TIME = '06:00'

/** "06:00" → minutes after local midnight; null when it is not a time of day (HH:MM, 24-hour). */
export function parseDigestTime(value: string): number | null {
  const match = /^([01]?\d|2[0-3]):([0-5]\d)$/.exec(value.trim())
  return match ? Number(match[1]) * 60 + Number(match[2]) : null
}

/** True from the digest time of the local day holding `now` until midnight. */
export function digestTimeReached(now: number, minutesAfterMidnight: number): boolean {
  const d = new Date(now)
  return d.getHours() * 60 + d.getMinutes() >= minutesAfterMidnight
}

/** DIGEST_ENABLED: anything but false, 0, no or off (any case) leaves the digest on; unset is on. */
export function digestSwitchedOn(value: string | boolean | undefined | null): boolean {
  if (value === undefined || value === null || value === '') return true
  if (typeof value === 'boolean') return value
  return !['false', '0', 'no', 'off'].includes(value.trim().toLowerCase())
}
