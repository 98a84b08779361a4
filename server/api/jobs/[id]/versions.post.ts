// Start a draft of a job's breakdown: a copy of the latest published content (same lineage ids), or an empty one. Coaches and admins.
import { randomUUID } from 'node:crypto'
import { and, desc, eq, isNotNull, max } from 'drizzle-orm'
import { breakdownVersions, jobs } from '../../../db/schema'
import { idParamsSchema } from '../../../../shared/schemas/common'
import { emptyContent } from '../../../../shared/schemas/breakdown'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireRole(event, 'coach', 'admin')
  const organisationId = caller.organisation.id
  const outcome = await writeTransaction(async (tx) => {
    const [job] = await tx.select({ id: jobs.id, archivedAt: jobs.archivedAt }).from(jobs).where(and(eq(jobs.id, id), eq(jobs.organisationId, organisationId))).limit(1)
    if (!job) return { kind: 'missing' as const }
    if (job.archivedAt) return { kind: 'archived' as const }
    const [draft] = await tx.select({ id: breakdownVersions.id }).from(breakdownVersions)
      .where(and(eq(breakdownVersions.organisationId, organisationId), eq(breakdownVersions.jobId, id), eq(breakdownVersions.status, 'draft'))).limit(1)
    if (draft) return { kind: 'draft-exists' as const, draftId: draft.id }
    // The newest version that was ever published: the published one, or the last retired one.
    const [base] = await tx.select({ id: breakdownVersions.id, content: breakdownVersions.content }).from(breakdownVersions)
      .where(and(eq(breakdownVersions.organisationId, organisationId), eq(breakdownVersions.jobId, id), isNotNull(breakdownVersions.publishedAt)))
      .orderBy(desc(breakdownVersions.publishedAt), desc(breakdownVersions.number)).limit(1)
    const [last] = await tx.select({ n: max(breakdownVersions.number) }).from(breakdownVersions)
      .where(and(eq(breakdownVersions.organisationId, organisationId), eq(breakdownVersions.jobId, id)))
    const version = {
      id: randomUUID(),
      organisationId,
      jobId: id,
      number: (last?.n ?? 0) + 1,
      status: 'draft' as const,
      revision: 0,
      content: base ? base.content : emptyContent(randomUUID),
      basedOnVersionId: base?.id ?? null,
      createdBy: caller.user.id,
    }
    await tx.insert(breakdownVersions).values(version)
    await recordAudit(tx, { organisationId, actorUserId: caller.user.id, action: 'version.draft_started', targetType: 'breakdown_version', targetId: version.id, detail: { jobId: id, number: version.number, basedOnVersionId: version.basedOnVersionId } })
    return { kind: 'created' as const, version }
  })
  if (outcome.kind === 'missing') throw notFound('That job')
  if (outcome.kind === 'archived') throw conflict('This job is archived; it takes no new drafts.')
  if (outcome.kind === 'draft-exists') {
    const message = 'This job already has a draft. Open it and carry on there.'
    throw createError({ statusCode: 409, statusMessage: 'Conflict', message, data: { message, draftId: outcome.draftId } })
  }
  const { version } = outcome
  setResponseStatus(event, 201)
  return { id: version.id, number: version.number, status: version.status, revision: version.revision, content: version.content, basedOnVersionId: version.basedOnVersionId }
})
