// A work area id from the client must be one of the caller's organisation's work areas.
import { and, eq } from 'drizzle-orm'
import { workAreas } from '../db/schema'

export async function assertWorkAreaInOrganisation(organisationId: string, workAreaId: string | null | undefined) {
  if (!workAreaId) return
  const db = await useDb()
  const [row] = await db.select({ id: workAreas.id }).from(workAreas).where(and(eq(workAreas.id, workAreaId), eq(workAreas.organisationId, organisationId))).limit(1)
  if (!row) {
    const message = 'Choose a work area from the list.'
    throw createError({ statusCode: 422, message, data: { message, fieldErrors: { workAreaId: [message] } } })
  }
}
