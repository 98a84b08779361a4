// The demo organisation (DESIGN.md §10): an invented bakery and packaging plant.
// Every name here is made up. Used by `npm run seed` and by `npm start` on an empty database.
import { randomUUID } from 'node:crypto'
import { count } from 'drizzle-orm'
import type { LibSQLDatabase } from 'drizzle-orm/libsql'
import * as schema from './schema'
import type { Role } from '../../shared/types/roles'

export const DEMO_ORGANISATION = 'Hollowmere Bakery & Packing'
export const DEFAULT_DEMO_PASSWORD = 'bakery-demo-2026'

export const DEMO_ACCOUNTS: Array<{ email: string, name: string, role: Role }> = [
  { email: 'admin@bakery.example', name: 'Odile Marchetti-Vance', role: 'admin' },
  { email: 'coach@bakery.example', name: 'Bram Okonkwo-Lindqvist', role: 'coach' },
  { email: 'learner@bakery.example', name: 'Saoirse Pemberton-Ruiz', role: 'learner' },
  { email: 'auditor@bakery.example', name: 'Teodor Halvorsen-Achebe', role: 'auditor' },
]

export const DEMO_WORK_AREAS = ['Bake line', 'Slicing and bagging', 'Maintenance']

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
    await tx.insert(schema.workAreas).values(DEMO_WORK_AREAS.map(name => ({ id: randomUUID(), organisationId, name })))
    await tx.insert(schema.auditLog).values({ id: randomUUID(), organisationId, actorUserId: null, action: 'demo.seeded', targetType: 'organisation', targetId: organisationId, detail: { accounts: people.length } })
  })
  return { organisationId }
}
