// Work areas of the caller's organisation. Any member.
import { asc, eq } from 'drizzle-orm'
import { workAreas } from '../../db/schema'

export default defineEventHandler(async (event) => {
  const caller = await requireSignedIn(event)
  const db = await useDb()
  return db.select({ id: workAreas.id, name: workAreas.name }).from(workAreas)
    .where(eq(workAreas.organisationId, caller.organisation.id))
    .orderBy(asc(workAreas.name))
})
