// What changed on the server since a cursor (since=0 for everything), and the spot checks due, for a tablet. Coaches and admins.
import { syncPullQuerySchema } from '../../shared/schemas/sync'
import { tabletDueChecks } from '../utils/sync-pull'

export default defineEventHandler(async (event) => {
  const { since } = queryValid(event, syncPullQuerySchema)
  const caller = await requireRole(event, 'admin', 'coach')
  const db = await useDb()
  const changes = await pullChanges(db.$client, caller.organisation.id, since)
  const dueChecks = await tabletDueChecks(db.$client, caller.organisation.id, await trainingRows(caller.organisation.id))
  return { ...changes, dueChecks }
})
