// What changed on the server since a cursor (since=0 for everything), for a tablet. Coaches and admins.
import { syncPullQuerySchema } from '../../shared/schemas/sync'

export default defineEventHandler(async (event) => {
  const { since } = queryValid(event, syncPullQuerySchema)
  const caller = await requireRole(event, 'admin', 'coach')
  const db = await useDb()
  return pullChanges(db.$client, caller.organisation.id, since)
})
