// Publish a draft with a change note; the job's previously published version is retired in the same transaction. Admins; coaches when the organisation allows it.
import { and, eq } from 'drizzle-orm'
import { breakdownVersions } from '../../../db/schema'
import { idParamsSchema } from '../../../../shared/schemas/common'
import { publishSchema, publishableContentSchema } from '../../../../shared/schemas/breakdown'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const input = await readValid(event, publishSchema)
  const caller = await requirePublisher(event)
  const organisationId = caller.organisation.id
  const outcome = await writeTransaction(async (tx) => {
    const state = await versionState(tx, organisationId, id)
    if (!state) return { kind: 'missing' as const }
    if (state.status !== 'draft') return { kind: 'locked' as const, status: state.status }
    const ready = publishableContentSchema.safeParse(state.content)
    if (!ready.success) throw invalidInput(ready.error, 'The breakdown is not ready to publish yet.')
    await assertOwnPhotos(tx, organisationId, state.content)
    const now = new Date()
    const retired = await tx.update(breakdownVersions).set({ status: 'retired', retiredAt: now, updatedAt: now })
      .where(and(eq(breakdownVersions.organisationId, organisationId), eq(breakdownVersions.jobId, state.jobId), eq(breakdownVersions.status, 'published')))
      .returning({ id: breakdownVersions.id, number: breakdownVersions.number })
    await tx.update(breakdownVersions).set({ status: 'published', changeNote: input.changeNote, publishedBy: caller.user.id, publishedAt: now, updatedAt: now })
      .where(and(eq(breakdownVersions.id, id), eq(breakdownVersions.organisationId, organisationId), eq(breakdownVersions.status, 'draft')))
    // Tablets hear about both: the new version arrives, the old one leaves.
    await recordChange(tx, organisationId, 'version', id)
    for (const old of retired) {
      await recordChange(tx, organisationId, 'version', old.id)
      await recordAudit(tx, { organisationId, actorUserId: caller.user.id, action: 'version.retired', targetType: 'breakdown_version', targetId: old.id, detail: { jobId: state.jobId, number: old.number, replacedBy: id } })
    }
    await recordAudit(tx, { organisationId, actorUserId: caller.user.id, action: 'version.published', targetType: 'breakdown_version', targetId: id, detail: { jobId: state.jobId, number: state.number, changeNote: input.changeNote } })
    return { kind: 'published' as const, version: await findVersion(tx, organisationId, id) }
  })
  if (outcome.kind === 'missing') throw notFound('That breakdown version')
  if (outcome.kind === 'locked') throw conflict(outcome.status === 'published' ? 'This version is published already.' : 'A retired version cannot be published again; start a new draft from the latest published one.')
  // Everyone trained on an older version is flagged for a refresher now; the editor says how many.
  // The version is published whatever happens here, so a failure to count answers null, not an error.
  const flaggedForRefresher = await retrainingEntries(organisationId, [outcome.version!.jobId]).then(list => list.length, () => null)
  return { ...outcome.version!, flaggedForRefresher }
})
