// The daily reminder digest: gathers each organisation's spot checks due and plan items late
// (trainingRows, the same derived state the plan and Today show), decides who is told what
// (digest-compose.ts) and sends one mail per person per day at most through the usual mail path.
//
// Once a day, even with several app instances: before a mail goes out, its digest_sends row
// (unique on user + day) is inserted. That insert is the decision: the instance whose insert
// goes in sends; any other finds the row and skips. The row is written first and confirmed after:
//   1. claim   insert (user, day, sent_at = 0) — on conflict nothing, so only one claim wins —
//              and, in the same transaction, the composed mail into the mail outbox
//   2. send    through SMTP (mail-outbox.ts deliverQueuedMail)
//   3. confirm sent_at = now, in the transaction that takes the mail out of the outbox. When the
//              mail server does not take it, the mail waits in the outbox and is sent when the
//              server answers again (that day at the latest: it expires at the end of the day);
//              the claim stays, so no later run composes a second digest meanwhile.
// Recording before sending means a crash between 1 and 3 leaves a claim with sent_at = 0 and that
// person gets no digest that day rather than two (what it said is still due tomorrow); the outbox
// drops a digest whose sender died mid-send for the same reason. Sending first would turn the same
// crash into a second mail from the next run, which is worse.
import { randomUUID } from 'node:crypto'
import { and, eq, inArray } from 'drizzle-orm'
import { digestSends, jobs, learners, lessons, memberships, organisations, spotChecks, users } from '../db/schema'
import { endOfDay, localDay } from '../../shared/utils/training-status'
import { DEFAULT_DIGEST_TIME, DIGEST_ROLES, composeDigests, digestSwitchedOn, parseDigestTime, type CoachedAt, type Digest, type DigestMember, type DueCheckFact, type LatePlanFact } from './digest-compose'

export interface DigestRunSummary {
  organisations: number
  /** mails handed to the mail server */
  sent: number
  /** mails the mail server did not take now; they wait in the mail outbox and go when it answers */
  queued: number
  /** people whose digest for today had already gone (or was being sent by another instance) */
  alreadySent: number
  /** people with the digest on and nothing to be told today */
  nothingToSay: number
  /** coaches and admins who turned the digest off */
  turnedOff: number
  /** organisations whose digests could not be worked out (logged; the next run tries again) */
  organisationErrors: number
}

/** How long the scheduled run's lease lasts before another instance may take over (renewed while it runs). */
export const DIGEST_LEASE_MS = 10 * 60 * 1000

/** DIGEST_ENABLED and DIGEST_TIME, read at run time (see README "Configuration"). */
export function digestSettings(): { enabled: boolean, minutes: number, time: string } {
  const config = useRuntimeConfig()
  const enabled = digestSwitchedOn(process.env.DIGEST_ENABLED ?? (config.digestEnabled as string | boolean | undefined))
  const configured = String(process.env.DIGEST_TIME || config.digestTime || DEFAULT_DIGEST_TIME)
  const minutes = parseDigestTime(configured)
  if (minutes === null) {
    console.warn(`[fourfold] DIGEST_TIME "${configured}" is not a time like 06:00; using ${DEFAULT_DIGEST_TIME}.`)
    return { enabled, minutes: parseDigestTime(DEFAULT_DIGEST_TIME)!, time: DEFAULT_DIGEST_TIME }
  }
  return { enabled, minutes, time: configured.trim() }
}

const CHUNK = 500
function chunks<T>(list: T[]): T[][] {
  const out: T[][] = []
  for (let i = 0; i < list.length; i += CHUNK) out.push(list.slice(i, i + CHUNK))
  return out
}

/** Coaches and admins of the organisation, with their digest setting. */
async function digestMembers(db: Db, organisationId: string): Promise<DigestMember[]> {
  return db.select({ userId: users.id, name: users.name, email: users.email, role: memberships.role, digestEmails: memberships.digestEmails })
    .from(memberships)
    .innerJoin(users, eq(users.id, memberships.userId))
    .where(and(eq(memberships.organisationId, organisationId), inArray(memberships.role, [...DIGEST_ROLES])))
}

/** The organisation's checks due and plan items late, with names and who coached them last. */
async function digestFacts(db: Db, organisationId: string, now: number): Promise<{ checks: DueCheckFact[], late: LatePlanFact[] }> {
  const rows = (await trainingRows(organisationId, {}, now)).filter(r => r.status === 'check-due' || r.late)
  if (!rows.length) return { checks: [], late: [] }

  // Archived learners and jobs are nobody's business any more: leave them out.
  const [learnerRows, jobRows] = await Promise.all([
    db.select({ id: learners.id, name: learners.name, archivedAt: learners.archivedAt }).from(learners).where(eq(learners.organisationId, organisationId)),
    db.select({ id: jobs.id, title: jobs.title, archivedAt: jobs.archivedAt }).from(jobs).where(eq(jobs.organisationId, organisationId)),
  ])
  const learnerName = new Map(learnerRows.filter(l => !l.archivedAt).map(l => [l.id, l.name]))
  const jobTitle = new Map(jobRows.filter(j => !j.archivedAt).map(j => [j.id, j.title]))
  const live = rows.filter(r => learnerName.has(r.learnerId) && jobTitle.has(r.jobId))

  const due = live.filter(r => r.status === 'check-due' && r.nextCheckAt !== null)
  const lessonIds = due.map(r => r.lastLessonId).filter((id): id is string => id !== null)
  const checkIds = due.map(r => r.lastCheckId).filter((id): id is string => id !== null)
  const lessonCoach = new Map<string, CoachedAt>()
  const checkCoach = new Map<string, CoachedAt>()
  for (const ids of chunks(lessonIds)) {
    const found = await db.select({ id: lessons.id, coachUserId: lessons.coachUserId, signedOffAt: lessons.signedOffAt, startedAt: lessons.startedAt })
      .from(lessons).where(and(eq(lessons.organisationId, organisationId), inArray(lessons.id, ids)))
    for (const l of found) lessonCoach.set(l.id, { coachUserId: l.coachUserId, at: (l.signedOffAt ?? l.startedAt).getTime() })
  }
  for (const ids of chunks(checkIds)) {
    const found = await db.select({ id: spotChecks.id, coachUserId: spotChecks.coachUserId, finishedAt: spotChecks.finishedAt, startedAt: spotChecks.startedAt })
      .from(spotChecks).where(and(eq(spotChecks.organisationId, organisationId), inArray(spotChecks.id, ids)))
    for (const c of found) checkCoach.set(c.id, { coachUserId: c.coachUserId, at: (c.finishedAt ?? c.startedAt).getTime() })
  }

  const checks: DueCheckFact[] = due.map(r => ({
    learnerId: r.learnerId,
    learnerName: learnerName.get(r.learnerId)!,
    jobId: r.jobId,
    jobTitle: jobTitle.get(r.jobId)!,
    nextCheckAt: r.nextCheckAt!,
    overdue: r.overdueCheck,
    lastLesson: r.lastLessonId ? lessonCoach.get(r.lastLessonId) ?? null : null,
    lastCheck: r.lastCheckId ? checkCoach.get(r.lastCheckId) ?? null : null,
  }))
  const late: LatePlanFact[] = live.filter(r => r.late && r.planItem?.targetDate).map(r => ({
    learnerId: r.learnerId,
    learnerName: learnerName.get(r.learnerId)!,
    jobId: r.jobId,
    jobTitle: jobTitle.get(r.jobId)!,
    targetDate: r.planItem!.targetDate!,
    progress: r.status === 'reteach' ? 'reteach' : r.lastLessonId ? 'in-training' : 'not-started',
  }))
  return { checks, late }
}

/**
 * Claims today's row for one person and queues their composed digest with it, in one transaction.
 * The queued mail's id when this call won the claim and must send, else null.
 */
async function claimDigest(db: Db, organisationId: string, digest: Digest, organisation: string, day: string, now: number): Promise<string | null> {
  const mail = digestMail({
    to: digest.member.email,
    name: digest.member.name,
    organisation,
    now,
    checks: digest.checks,
    unassignedChecks: digest.unassignedChecks,
    late: digest.late,
    links: { today: appLink('/'), plan: appLink('/plan'), account: appLink('/account') },
  })
  return serialiseWrite(() => db.transaction(async (tx) => {
    const id = randomUUID()
    const inserted = await tx.insert(digestSends)
      .values({ id, organisationId, userId: digest.member.userId, day, sentAt: 0 })
      .onConflictDoNothing()
      .returning({ id: digestSends.id })
    if (!inserted.length) return null
    // A digest is about its day: not sent by the end of it, it is dropped (tomorrow's says what is still due).
    return queueMail(tx, { ...mail, kind: 'digest', organisationId, digestSendId: id, expiresAt: endOfDay(now) })
  }, { behavior: 'immediate' }))
}

/**
 * Sends today's digests of the given organisations (all when none are named) to everyone who has
 * not had theirs yet. Safe to run any number of times, in any number of processes at once.
 */
export async function runDigests(options: { organisationIds?: string[], now?: number } = {}): Promise<DigestRunSummary> {
  const db = await useDb()
  const now = options.now ?? Date.now()
  const day = localDay(now)
  const orgs = options.organisationIds
    ? await db.select({ id: organisations.id, name: organisations.name }).from(organisations).where(inArray(organisations.id, options.organisationIds))
    : await db.select({ id: organisations.id, name: organisations.name }).from(organisations)
  const summary: DigestRunSummary = { organisations: orgs.length, sent: 0, queued: 0, alreadySent: 0, nothingToSay: 0, turnedOff: 0, organisationErrors: 0 }

  // One organisation's trouble (a failed read) must not keep the others' digests back.
  for (const org of orgs) {
    try {
      await runOrganisationDigests(db, org, day, now, summary)
    }
    catch (error) {
      summary.organisationErrors += 1
      console.error(`[fourfold] the digests of organisation ${org.id} could not be worked out; the next run tries again:`, error)
    }
  }
  return summary
}

async function runOrganisationDigests(db: Db, org: { id: string, name: string }, day: string, now: number, summary: DigestRunSummary) {
  const members = await digestMembers(db, org.id)
  summary.turnedOff += members.filter(m => !m.digestEmails).length
  const wanting = members.filter(m => m.digestEmails)
  const done = new Set((await db.select({ userId: digestSends.userId }).from(digestSends)
    .where(and(eq(digestSends.organisationId, org.id), eq(digestSends.day, day)))).map(r => r.userId))
  const pending = new Set(wanting.filter(m => !done.has(m.userId)).map(m => m.userId))
  summary.alreadySent += wanting.length - pending.size
  // Every 15 minutes after the digest time most organisations are done: no reading then.
  if (!pending.size) return

  const facts = await digestFacts(db, org.id, now)
  const digests = composeDigests(members, facts.checks, facts.late).filter(d => pending.has(d.member.userId))
  summary.nothingToSay += pending.size - digests.length
  for (const digest of digests) {
    const mailId = await claimDigest(db, org.id, digest, org.name, day, now)
    if (!mailId) {
      summary.alreadySent += 1
      continue
    }
    const delivered = await deliverQueuedMail({ ids: [mailId] }).catch((error) => {
      console.error(`[fourfold] digest to ${digest.member.email} not sent yet; it stays queued:`, error)
      return { sent: 0 }
    })
    if (delivered.sent) summary.sent += 1
    else summary.queued += 1
  }
}
