// Breakdown versions scoped to the caller's organisation: loading one, the "may publish" rule,
// the photo ownership check, and the answers for writes a version does not accept.
import type { H3Event } from 'h3'
import { and, eq, inArray } from 'drizzle-orm'
import { breakdownVersions, jobs, uploads, users, workAreas } from '../db/schema'
import type { BreakdownContent } from '../../shared/schemas/breakdown'

type Reader = Pick<Db, 'select'>

/** Publishing and retiring: admins always; coaches only when the organisation allows it. */
export async function requirePublisher(event: H3Event): Promise<Caller> {
  const caller = await requireRole(event, 'admin', 'coach')
  if (caller.membership.role === 'coach' && !caller.organisation.coachesMayPublish) {
    const message = 'In your organisation only admins publish and retire breakdowns. Ask an admin, or ask them to let coaches publish (Settings).'
    throw createError({ statusCode: 403, statusMessage: 'Forbidden', message, data: { message } })
  }
  return caller
}

/** One version with its job, as GET /api/versions/[id] answers it; undefined when not in this organisation. */
export async function findVersion(db: Reader, organisationId: string, id: string) {
  const [row] = await db.select({
    version: breakdownVersions,
    publishedByName: users.name,
    job: {
      id: jobs.id,
      title: jobs.title,
      purpose: jobs.purpose,
      hazards: jobs.hazards,
      ppe: jobs.ppe,
      toolsAndMaterials: jobs.toolsAndMaterials,
      workplaceArrangement: jobs.workplaceArrangement,
      coverageTarget: jobs.coverageTarget,
    },
    workAreaName: workAreas.name,
  }).from(breakdownVersions)
    .innerJoin(jobs, and(eq(jobs.id, breakdownVersions.jobId), eq(jobs.organisationId, organisationId)))
    .leftJoin(workAreas, and(eq(workAreas.id, jobs.workAreaId), eq(workAreas.organisationId, organisationId)))
    .leftJoin(users, eq(users.id, breakdownVersions.publishedBy))
    .where(and(eq(breakdownVersions.id, id), eq(breakdownVersions.organisationId, organisationId)))
    .limit(1)
  if (!row) return undefined
  const v = row.version
  return {
    id: v.id,
    jobId: v.jobId,
    number: v.number,
    status: v.status,
    revision: v.revision,
    content: v.content,
    changeNote: v.changeNote,
    publishedAt: v.publishedAt,
    publishedByName: row.publishedByName ?? null,
    retiredAt: v.retiredAt,
    basedOnVersionId: v.basedOnVersionId,
    createdAt: v.createdAt,
    updatedAt: v.updatedAt,
    job: { ...row.job, workAreaName: row.workAreaName ?? null },
  }
}

export type VersionView = NonNullable<Awaited<ReturnType<typeof findVersion>>>

/** Every photo the content refers to, with the field path the form shows an error beside. */
export function photoReferences(content: BreakdownContent): Array<{ path: string, photoId: string }> {
  const refs: Array<{ path: string, photoId: string }> = []
  content.units.forEach((unit, u) => unit.steps.forEach((step, s) => {
    if (step.photoId) refs.push({ path: `units.${u}.steps.${s}.photoId`, photoId: step.photoId })
    step.keyPoints.forEach((kp, k) => {
      if (kp.photoId) refs.push({ path: `units.${u}.steps.${s}.keyPoints.${k}.photoId`, photoId: kp.photoId })
    })
  }))
  return refs
}

/** Each photoId must be an upload of the caller's organisation; 422 naming every field that is not, by its path in the content (units.0.steps.1.photoId). */
export async function assertOwnPhotos(db: Reader, organisationId: string, content: BreakdownContent) {
  const refs = photoReferences(content)
  const wanted = [...new Set(refs.map(r => r.photoId))]
  const found = new Set<string>()
  // Chunked: SQLite binds at most 32,766 variables per statement.
  for (let i = 0; i < wanted.length; i += 500) {
    const rows = await db.select({ id: uploads.id }).from(uploads)
      .where(and(eq(uploads.organisationId, organisationId), inArray(uploads.id, wanted.slice(i, i + 500))))
    for (const row of rows) found.add(row.id)
  }
  const missing = refs.filter(r => !found.has(r.photoId))
  if (!missing.length) return
  const fieldErrors = Object.fromEntries(missing.map(r => [r.path, ['This photo was not found in your organisation. Upload it again.']]))
  const message = missing.length === 1 ? 'One photo was not found in your organisation.' : `${missing.length} photos were not found in your organisation.`
  throw createError({ statusCode: 422, statusMessage: 'Unprocessable Entity', message, data: { message, fieldErrors } })
}

/** 409 for any change to a published or retired version. */
export function versionLocked(status: string) {
  return conflict(status === 'retired'
    ? 'A retired version cannot be changed; start a new draft.'
    : 'A published version cannot be changed; start a new draft.')
}

/** 409 for a save based on an older revision: the editor offers to reload, never overwrites. */
export function staleRevision(currentRevision: number) {
  const message = 'Someone saved this draft after you opened it. Reload to see their changes; yours were not saved.'
  return createError({ statusCode: 409, statusMessage: 'Conflict', message, data: { message, currentRevision } })
}

/** The version's job and status, for telling why a conditional write touched no row. */
export async function versionState(db: Reader, organisationId: string, id: string) {
  const [row] = await db.select({ jobId: breakdownVersions.jobId, status: breakdownVersions.status, revision: breakdownVersions.revision, number: breakdownVersions.number, content: breakdownVersions.content })
    .from(breakdownVersions)
    .where(and(eq(breakdownVersions.id, id), eq(breakdownVersions.organisationId, organisationId)))
    .limit(1)
  return row
}
