// A tablet's push: its lessons, spot checks and their marks, merged idempotently (DESIGN.md §7). Coaches and admins.
import { syncEnvelopeSchema } from '../../shared/schemas/sync'

export default defineEventHandler(async (event) => {
  const envelope = await readValid(event, syncEnvelopeSchema)
  const caller = await requireRole(event, 'admin', 'coach')
  const db = await useDb()
  const result = await mergePush(db.$client, caller.organisation.id, envelope.deviceId, envelope)
  return { accepted: result.accepted, rejected: result.rejected, scores: result.scores, checks: result.checks, cursor: result.cursor }
})
