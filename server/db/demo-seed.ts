// The demo organisation (DESIGN.md §10): an invented bakery and packaging plant.
// Every name here is made up. Used by `npm run seed` and by `npm start` on an empty database.
import { randomUUID } from 'node:crypto'
import { and, count, eq } from 'drizzle-orm'
import type { LibSQLDatabase } from 'drizzle-orm/libsql'
import * as schema from './schema'
import type { Role } from '../../shared/types/roles'
import type { BreakdownContent } from '../../shared/schemas/breakdown'
import { DEMO_JOBS, demoContent } from './demo-jobs'

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
