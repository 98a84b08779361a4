// The demo organisation (DESIGN.md §10): an invented bakery and packaging plant.
// Every name here is made up. Used by `npm run seed` and by `npm start` on an empty database.
import { randomUUID } from 'node:crypto'
import { and, count, eq } from 'drizzle-orm'
import type { LibSQLDatabase } from 'drizzle-orm/libsql'
import * as schema from './schema'
import type { Role } from '../../shared/types/roles'
import type { BreakdownContent } from '../../shared/schemas/breakdown'
import { DEMO_JOBS, demoContent } from './demo-jobs'
import { replayLesson } from '../../shared/utils/lesson-state'
import type { LessonEvent } from '../../shared/utils/lesson-events'
import { suggestCheckElements } from '../../shared/utils/check-elements'
import { checkResult, type CheckEvent } from '../../shared/utils/check-state'

export const DEMO_ORGANISATION = 'Hollowmere Bakery & Packing'
export const DEFAULT_DEMO_PASSWORD = 'bakery-demo-2026'

export const DEMO_ACCOUNTS: Array<{ email: string, name: string, role: Role }> = [
  { email: 'admin@bakery.example', name: 'Odile Marchetti-Vance', role: 'admin' },
  { email: 'coach@bakery.example', name: 'Bram Okonkwo-Lindqvist', role: 'coach' },
  { email: 'learner@bakery.example', name: 'Saoirse Pemberton-Ruiz', role: 'learner' },
  { email: 'auditor@bakery.example', name: 'Teodor Halvorsen-Achebe', role: 'auditor' },
]

export const DEMO_WORK_AREAS = ['Bake line', 'Slicing and bagging', 'Maintenance']

/** Roster entries without an account (the demo learner account gets its own entry). */
export const DEMO_ROSTER: Array<{ name: string, workArea: string, reference: string }> = [
  { name: 'Ilse Brannagh-Okafor', workArea: 'Slicing and bagging', reference: 'HB-0142' },
  { name: 'Matthias Quennell', workArea: 'Bake line', reference: 'HB-0157' },
  { name: 'Yusra Delacroix-Behn', workArea: 'Slicing and bagging', reference: 'HB-0163' },
  { name: 'Cormac Ainsley-Tove', workArea: 'Maintenance', reference: 'HB-0171' },
  { name: 'Nadia Strathorne', workArea: 'Bake line', reference: 'HB-0178' },
]

type AnyDb = LibSQLDatabase<typeof schema>

export async function databaseIsEmpty(db: AnyDb): Promise<boolean> {
  const [row] = await db.select({ n: count() }).from(schema.organisations)
  return (row?.n ?? 0) === 0
}

export async function seedDemo(db: AnyDb, options: { password: string, hash: (password: string) => Promise<string> }) {
  const organisationId = randomUUID()
  const passwordHash = await options.hash(options.password)
  const now = new Date()
  const people = DEMO_ACCOUNTS.map(a => ({ ...a, id: randomUUID() }))
  await db.transaction(async (tx) => {
    await tx.insert(schema.organisations).values({ id: organisationId, name: DEMO_ORGANISATION, coachesMayPublish: true })
    for (const p of people) {
      await tx.insert(schema.users).values({ id: p.id, email: p.email, name: p.name, passwordHash, passwordChangedAt: now })
      await tx.insert(schema.memberships).values({ id: randomUUID(), organisationId, userId: p.id, role: p.role })
    }
    const areas = DEMO_WORK_AREAS.map(name => ({ id: randomUUID(), organisationId, name }))
    await tx.insert(schema.workAreas).values(areas)
    const learnerAccount = people.find(p => p.role === 'learner')!
    await tx.insert(schema.learners).values([
      { id: randomUUID(), organisationId, name: learnerAccount.name, userId: learnerAccount.id, workAreaId: areas.find(a => a.name === 'Slicing and bagging')!.id, reference: 'HB-0139' },
      ...DEMO_ROSTER.map(r => ({ id: randomUUID(), organisationId, name: r.name, workAreaId: areas.find(a => a.name === r.workArea)!.id, reference: r.reference })),
    ])
    const admin = people.find(p => p.role === 'admin')!
    const coach = people.find(p => p.role === 'coach')!
    const day = 86_400_000
    for (const [j, job] of DEMO_JOBS.entries()) {
      const jobId = randomUUID()
      await tx.insert(schema.jobs).values({
        id: jobId,
        organisationId,
        workAreaId: areas.find(a => a.name === job.workArea)?.id ?? null,
        title: job.title,
        purpose: job.purpose,
        hazards: job.hazards,
        ppe: job.ppe,
        toolsAndMaterials: job.toolsAndMaterials,
        workplaceArrangement: job.workplaceArrangement,
        coverageTarget: job.coverageTarget,
      })
      let previous: { id: string, content: BreakdownContent } | undefined
      for (const [v, version] of job.versions.entries()) {
        const isLatest = v === job.versions.length - 1
        const publishedAt = new Date(now.getTime() - (60 - j * 5 - v * 20) * day)
        const content = demoContent(version.units, randomUUID, previous?.content)
        const versionId = randomUUID()
        await tx.insert(schema.breakdownVersions).values({
          id: versionId,
          organisationId,
          jobId,
          number: v + 1,
          status: isLatest ? 'published' : 'retired',
          content,
          changeNote: version.changeNote,
          basedOnVersionId: previous?.id ?? null,
          createdBy: coach.id,
          publishedBy: admin.id,
          publishedAt,
          retiredAt: isLatest ? null : new Date(publishedAt.getTime() + 20 * day),
        })
        previous = { id: versionId, content }
      }
    }
    await tx.insert(schema.auditLog).values({ id: randomUUID(), organisationId, actorUserId: null, action: 'demo.seeded', targetType: 'organisation', targetId: organisationId, detail: { accounts: people.length } })
  })
  await seedDemoPlan(db, organisationId, now.getTime())
  await seedDemoChecks(db, organisationId, now.getTime())
  await seedDemoStudy(db, organisationId, now.getTime())
  return { organisationId }
}

/**
 * The demo plan (issue 6): several needs with their reasons and target dates relative to today,
 * one of them already late, so the plan matrix looks like a real timetable.
 */
async function seedDemoPlan(db: AnyDb, organisationId: string, now: number) {
  const learnerRows = await db.select({ id: schema.learners.id, name: schema.learners.name }).from(schema.learners).where(eq(schema.learners.organisationId, organisationId))
  const jobRows = await db.select({ id: schema.jobs.id, title: schema.jobs.title }).from(schema.jobs).where(eq(schema.jobs.organisationId, organisationId))
  const [coach] = await db.select({ id: schema.users.id }).from(schema.users)
    .innerJoin(schema.memberships, and(eq(schema.memberships.userId, schema.users.id), eq(schema.memberships.organisationId, organisationId)))
    .where(eq(schema.users.email, 'coach@bakery.example'))
  const day = (offset: number) => {
    const d = new Date(now)
    d.setDate(d.getDate() + offset)
    return `${d.getFullYear()}-${String(d.getMonth() + 1).padStart(2, '0')}-${String(d.getDate()).padStart(2, '0')}`
  }
  const needs: Array<{ learner: string, job: string, in: number | null, reason: (typeof schema.planItems.$inferInsert)['reason'], note: string }> = [
    { learner: 'Ilse Brannagh-Okafor', job: 'Thread film on the bag sealer', in: 10, reason: 'turnover', note: 'Takes over the late shift sealer when Pieter leaves.' },
    { learner: 'Yusra Delacroix-Behn', job: 'Change the slicer blade set', in: -3, reason: 'quality-or-safety', note: 'Torn loaves on line 2 after a blade change.' },
    { learner: 'Yusra Delacroix-Behn', job: 'Check-weigh a tray', in: 30, reason: 'absence-cover', note: '' },
    { learner: 'Matthias Quennell', job: 'Grease the mixer gearbox', in: 21, reason: 'absence-cover', note: 'Covers maintenance over the holidays.' },
    { learner: 'Nadia Strathorne', job: 'Check-weigh a tray', in: 5, reason: 'new-job', note: 'New tray line starts next week.' },
    { learner: 'Cormac Ainsley-Tove', job: 'Change the slicer blade set', in: 14, reason: 'changed-job', note: 'The blade guard latch changed in version 2.' },
    { learner: 'Saoirse Pemberton-Ruiz', job: 'Check-weigh a tray', in: null, reason: 'other', note: 'Asked to learn it.' },
  ]
  const rows = needs.flatMap((n) => {
    const learner = learnerRows.find(l => l.name === n.learner)
    const job = jobRows.find(j => j.title === n.job)
    if (!learner || !job) return []
    return [{ id: randomUUID(), organisationId, learnerId: learner.id, jobId: job.id, targetDate: n.in === null ? null : day(n.in), reason: n.reason, note: n.note, createdBy: coach?.id ?? null }]
  })
  if (rows.length) await db.insert(schema.planItems).values(rows)
}

/**
 * Lessons signed off as ready and spot checks (issue 6): one learner's first check is two days
 * late, another's is due today, and a third had a clean check yesterday, so Today shows checks due
 * and the taper has something to show. Scores and outcomes come from the same shared/utils the
 * sync merge uses.
 */
async function seedDemoChecks(db: AnyDb, organisationId: string, now: number) {
  const DAY = 86_400_000
  const learnerRows = await db.select({ id: schema.learners.id, name: schema.learners.name }).from(schema.learners).where(eq(schema.learners.organisationId, organisationId))
  const versionRows = await db.select({ id: schema.breakdownVersions.id, jobId: schema.breakdownVersions.jobId, content: schema.breakdownVersions.content, title: schema.jobs.title })
    .from(schema.breakdownVersions).innerJoin(schema.jobs, eq(schema.jobs.id, schema.breakdownVersions.jobId))
    .where(and(eq(schema.breakdownVersions.organisationId, organisationId), eq(schema.breakdownVersions.status, 'published')))
  const [coach] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, 'coach@bakery.example'))
  if (!coach) return
  const deviceId = randomUUID()
  let seq = 0
  const taught: Array<{ learner: string, job: string, signedOffDaysAgo: number, check?: { daysAgo: number, intervalIndex: number } }> = [
    { learner: 'Ilse Brannagh-Okafor', job: 'Thread film on the bag sealer', signedOffDaysAgo: 3 },
    { learner: 'Nadia Strathorne', job: 'Change the slicer blade set', signedOffDaysAgo: 1 },
    { learner: 'Matthias Quennell', job: 'Check-weigh a tray', signedOffDaysAgo: 4, check: { daysAgo: 1, intervalIndex: 1 } },
  ]
  await db.transaction(async (tx) => {
    for (const t of taught) {
      const learner = learnerRows.find(l => l.name === t.learner)
      const version = versionRows.find(v => v.title === t.job)
      if (!learner || !version) continue
      const content = version.content as BreakdownContent
      const steps = content.units.flatMap(u => u.steps)
      const keyPoints = steps.flatMap(st => st.keyPoints)
      const lessonId = randomUUID()
      const signedOffAt = now - t.signedOffDaysAgo * DAY
      const startedAt = signedOffAt - 50 * 60_000
      const ev = (pass: string, kind: LessonEvent['kind'], elementId: string | null, value: string | null): LessonEvent => {
        seq += 1
        return { id: randomUUID(), lessonId, pass, elementId, kind, value, clientTime: startedAt + 20 * 60_000 + seq * 5_000, deviceId, seq }
      }
      // A clean try-out: every step, key point and reason unaided, the steps named in order.
      const events = [
        ...steps.map(st => ev('T1-1', 'mark', st.id, 'unaided')),
        ev('T2-1', 'order-all', null, null),
        ...steps.map(st => ev('T2-1', 'mark', st.id, 'unaided')),
        ...keyPoints.map(k => ev('T3-1', 'mark', k.id, 'unaided')),
        ...keyPoints.filter(k => k.reason.trim()).map(k => ev('T4-1', 'mark', k.id, 'unaided')),
      ]
      await tx.insert(schema.lessons).values({ id: lessonId, organisationId, coachUserId: coach.id, learnerId: learner.id, jobId: version.jobId, versionId: version.id, place: 'Line 2', startedAt: new Date(startedAt), helper: '', decision: 'ready', signedOffAt: new Date(signedOffAt), stageSeconds: { prepare: 240, present: 900, tryout: 1500, followup: 300 }, clientUpdatedAt: signedOffAt, updatedByDevice: deviceId })
      await tx.insert(schema.lessonEvents).values(events.map(e => ({ ...e, organisationId, receivedAt: signedOffAt })))
      const state = replayLesson(events, content)
      await tx.insert(schema.lessonScores).values({ lessonId, organisationId, t1: state.scores.T1, t2: state.scores.T2, t3: state.scores.T3, t4: state.scores.T4, orderScore: state.scores.order, recall: state.scores.recall, readiness: state.readiness.suggestion, represent: state.readiness.represent, eventCount: events.length, computedAt: signedOffAt })
      if (!t.check) continue
      // A finished spot check on the suggested elements, every one unaided: clean.
      const checkId = randomUUID()
      const finishedAt = now - t.check.daysAgo * DAY
      const elements = suggestCheckElements(content, checkId)
      const checkEvents: CheckEvent[] = elements.map((elementId, i) => {
        seq += 1
        return { id: randomUUID(), checkId, elementId, kind: 'mark', value: 'unaided', clientTime: finishedAt - (elements.length - i) * 30_000, deviceId, seq }
      })
      const result = checkResult({ elements, intervalIndex: t.check.intervalIndex, finishedAt }, checkEvents, content)
      await tx.insert(schema.spotChecks).values({ id: checkId, organisationId, coachUserId: coach.id, learnerId: learner.id, jobId: version.jobId, versionId: version.id, lessonId, startedAt: new Date(finishedAt - (elements.length + 1) * 30_000), elements, note: 'Weighed three trays without a prompt.', finishedAt: new Date(finishedAt), outcome: result.outcome, intervalIndex: t.check.intervalIndex, nextIntervalIndex: result.nextIntervalIndex, nextDueAt: result.nextDueAt, clientUpdatedAt: finishedAt, updatedByDevice: deviceId })
      await tx.insert(schema.checkEvents).values(checkEvents.map(e => ({ ...e, organisationId, receivedAt: finishedAt })))
    }
  })
}

/**
 * The demo learner's own training (issue 6, items 5 and 8), so learner@bakery.example has study
 * cards and records, and their people page has a recall chart: the slicer taught on version 1
 * (another pass first, then ready) before version 2 was published (so it asks for re-teaching),
 * and the bag sealer taught ready with three clean spot checks up the taper (the next still to come).
 */
async function seedDemoStudy(db: AnyDb, organisationId: string, now: number) {
  const DAY = 86_400_000
  const [learner] = await db.select({ id: schema.learners.id }).from(schema.learners).innerJoin(schema.users, eq(schema.users.id, schema.learners.userId))
    .where(and(eq(schema.learners.organisationId, organisationId), eq(schema.users.email, 'learner@bakery.example')))
  const [coach] = await db.select({ id: schema.users.id }).from(schema.users).where(eq(schema.users.email, 'coach@bakery.example'))
  if (!learner || !coach) return
  const versionRows = await db.select({ id: schema.breakdownVersions.id, jobId: schema.breakdownVersions.jobId, number: schema.breakdownVersions.number, content: schema.breakdownVersions.content, title: schema.jobs.title })
    .from(schema.breakdownVersions).innerJoin(schema.jobs, eq(schema.jobs.id, schema.breakdownVersions.jobId))
    .where(eq(schema.breakdownVersions.organisationId, organisationId))
  const version = (title: string, number: number) => versionRows.find(v => v.title === title && v.number === number)
  const deviceId = randomUUID()
  let seq = 0
  const lessonsToSeed = [
    { title: 'Change the slicer blade set', number: 1, daysAgo: 50, decision: 'another-pass' as const, cuedKeyPoints: 2, checks: [] as Array<{ daysAgo: number, intervalIndex: number }> },
    { title: 'Change the slicer blade set', number: 1, daysAgo: 45, decision: 'ready' as const, cuedKeyPoints: 1, checks: [] },
    { title: 'Thread film on the bag sealer', number: 1, daysAgo: 10, decision: 'ready' as const, cuedKeyPoints: 0, checks: [{ daysAgo: 9, intervalIndex: 0 }, { daysAgo: 7, intervalIndex: 1 }, { daysAgo: 3, intervalIndex: 2 }] },
  ]
  await db.transaction(async (tx) => {
    for (const l of lessonsToSeed) {
      const v = version(l.title, l.number)
      if (!v) continue
      const content = v.content as BreakdownContent
      const steps = content.units.flatMap(u => u.steps)
      const keyPoints = steps.flatMap(st => st.keyPoints)
      const lessonId = randomUUID()
      const signedOffAt = now - l.daysAgo * DAY
      const startedAt = signedOffAt - 45 * 60_000
      const ev = (pass: string, kind: LessonEvent['kind'], elementId: string | null, value: string | null): LessonEvent => {
        seq += 1
        return { id: randomUUID(), lessonId, pass, elementId, kind, value, clientTime: startedAt + 15 * 60_000 + seq * 5_000, deviceId, seq }
      }
      const events = [
        ...steps.map(st => ev('T1-1', 'mark', st.id, 'unaided')),
        ev('T2-1', 'order-all', null, null),
        ...steps.map(st => ev('T2-1', 'mark', st.id, 'unaided')),
        // The first key points needed a cue in T3 (an earlier lesson needed more of them).
        ...keyPoints.map((k, i) => ev('T3-1', 'mark', k.id, i < l.cuedKeyPoints ? 'cued' : 'unaided')),
        ...keyPoints.filter(k => k.reason.trim()).map(k => ev('T4-1', 'mark', k.id, 'unaided')),
      ]
      await tx.insert(schema.lessons).values({ id: lessonId, organisationId, coachUserId: coach.id, learnerId: learner.id, jobId: v.jobId, versionId: v.id, place: 'Line 1', startedAt: new Date(startedAt), helper: '', decision: l.decision, signedOffAt: new Date(signedOffAt), stageSeconds: { prepare: 200, present: 800, tryout: 1300, followup: 240 }, clientUpdatedAt: signedOffAt, updatedByDevice: deviceId })
      await tx.insert(schema.lessonEvents).values(events.map(e => ({ ...e, organisationId, receivedAt: signedOffAt })))
      const state = replayLesson(events, content)
      await tx.insert(schema.lessonScores).values({ lessonId, organisationId, t1: state.scores.T1, t2: state.scores.T2, t3: state.scores.T3, t4: state.scores.T4, orderScore: state.scores.order, recall: state.scores.recall, readiness: state.readiness.suggestion, represent: state.readiness.represent, eventCount: events.length, computedAt: signedOffAt })
      for (const c of l.checks) {
        const checkId = randomUUID()
        const finishedAt = now - c.daysAgo * DAY
        const elements = suggestCheckElements(content, checkId)
        const checkEvents: CheckEvent[] = elements.map((elementId, i) => {
          seq += 1
          return { id: randomUUID(), checkId, elementId, kind: 'mark', value: 'unaided', clientTime: finishedAt - (elements.length - i) * 30_000, deviceId, seq }
        })
        const result = checkResult({ elements, intervalIndex: c.intervalIndex, finishedAt }, checkEvents, content)
        await tx.insert(schema.spotChecks).values({ id: checkId, organisationId, coachUserId: coach.id, learnerId: learner.id, jobId: v.jobId, versionId: v.id, lessonId, startedAt: new Date(finishedAt - (elements.length + 1) * 30_000), elements, note: '', finishedAt: new Date(finishedAt), outcome: result.outcome, intervalIndex: c.intervalIndex, nextIntervalIndex: result.nextIntervalIndex, nextDueAt: result.nextDueAt, clientUpdatedAt: finishedAt, updatedByDevice: deviceId })
        await tx.insert(schema.checkEvents).values(checkEvents.map(e => ({ ...e, organisationId, receivedAt: finishedAt })))
      }
    }
  })
}
