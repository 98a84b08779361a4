// Save a draft's content (autosave), based on the revision the editor last saw; a stale revision answers 409. Coaches and admins.
import { and, eq, sql } from 'drizzle-orm'
import { breakdownVersions } from '../../db/schema'
import { idParamsSchema } from '../../../shared/schemas/common'
import { saveDraftSchema } from '../../../shared/schemas/breakdown'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const input = await readValid(event, saveDraftSchema)
  const caller = await requireRole(event, 'coach', 'admin')
  const organisationId = caller.organisation.id
  const outcome = await writeTransaction(async (tx) => {
    // One conditional update: it touches the row only if it is this organisation's draft at the revision the editor saw.
    const [saved] = await tx.update(breakdownVersions)
      .set({ content: input.content, revision: sql`${breakdownVersions.revision} + 1`, updatedAt: new Date() })
      .where(and(
        eq(breakdownVersions.id, id),
        eq(breakdownVersions.organisationId, organisationId),
        eq(breakdownVersions.status, 'draft'),
        eq(breakdownVersions.revision, input.revision),
      ))
      .returning({ revision: breakdownVersions.revision, updatedAt: breakdownVersions.updatedAt, jobId: breakdownVersions.jobId })
    if (!saved) {
      const state = await versionState(tx, organisationId, id)
      if (!state) return { kind: 'missing' as const }
      if (state.status !== 'draft') return { kind: 'locked' as const, status: state.status }
      return { kind: 'stale' as const, currentRevision: state.revision }
    }
    // Throwing here rolls the update back.
    await assertOwnPhotos(tx, organisationId, input.content)
    await recordAudit(tx, { organisationId, actorUserId: caller.user.id, action: 'version.saved', targetType: 'breakdown_version', targetId: id, detail: { jobId: saved.jobId, revision: saved.revision } })
    return { kind: 'saved' as const, revision: saved.revision, updatedAt: saved.updatedAt }
  })
  if (outcome.kind === 'missing') throw notFound('That breakdown version')
  if (outcome.kind === 'locked') throw versionLocked(outcome.status)
  if (outcome.kind === 'stale') throw staleRevision(outcome.currentRevision)
  return { revision: outcome.revision, updatedAt: outcome.updatedAt }
})
