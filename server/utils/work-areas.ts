// Work areas: the rules other routes share.
import { and, eq } from 'drizzle-orm'
import { workAreas } from '../db/schema'

type Reader = Pick<Db, 'select'>

export function workAreaNameTaken() {
  return problem(409, 'A work area with this name exists already.', 'name')
}

/** A work area id from a form must name one of the caller's organisation's work areas (422 on the field otherwise). */
export async function assertOwnWorkArea(db: Reader, organisationId: string, workAreaId: string | null | undefined) {
  if (!workAreaId) return
  const [area] = await db.select({ id: workAreas.id }).from(workAreas)
    .where(and(eq(workAreas.id, workAreaId), eq(workAreas.organisationId, organisationId))).limit(1)
  if (!area) throw problem(422, 'Choose a work area from the list; that one is not in your organisation.', 'workAreaId')
}
