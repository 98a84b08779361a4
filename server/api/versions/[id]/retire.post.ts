// Retire a published version (the job then has no published breakdown until the next one). Admins; coaches when the organisation allows it.
import { and, eq } from 'drizzle-orm'
import { breakdownVersions } from '../../../db/schema'
import { idParamsSchema } from '../../../../shared/schemas/common'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requirePublisher(event)
  const organisationId = caller.organisation.id
  const outcome = await writeTransaction(async (tx) => {
    const now = new Date()
    const [retired] = await tx.update(breakdownVersions).set({ status: 'retired', retiredAt: now, updatedAt: now })
      .where(and(eq(breakdownVersions.id, id), eq(breakdownVersions.organisationId, organisationId), eq(breakdownVersions.status, 'published')))
      .returning({ jobId: breakdownVersions.jobId, number: breakdownVersions.number })
    if (!retired) {
      const state = await versionState(tx, organisationId, id)
      return state ? { kind: 'refused' as const, status: state.status } : { kind: 'missing' as const }
    }
    await recordChange(tx, organisationId, 'version', id)
    await recordAudit(tx, { organisationId, actorUserId: caller.user.id, action: 'version.retired', targetType: 'breakdown_version', targetId: id, detail: { jobId: retired.jobId, number: retired.number } })
    return { kind: 'retired' as const, version: await findVersion(tx, organisationId, id) }
  })
  if (outcome.kind === 'missing') throw notFound('That breakdown version')
  if (outcome.kind === 'refused') throw conflict(outcome.status === 'retired' ? 'This version is retired already.' : 'Only a published version can be retired; this one is a draft.')
  return outcome.version
})
