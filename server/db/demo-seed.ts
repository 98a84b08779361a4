// The demo organisation (DESIGN.md §10): an invented bakery and packaging plant.
// Every name here is made up. Used by `npm run seed` and by `npm start` on an empty database.
import { randomUUID } from 'node:crypto'
import { count } from 'drizzle-orm'
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
  return { organisationId }
}
