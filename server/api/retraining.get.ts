// Everyone in the organisation trained on an older version of a job than its current one (every job), for the tablet's refreshers offline. Coaches, admins and auditors.
import type { RetrainingEntry } from '../../shared/types/retraining'

export default defineEventHandler(async (event): Promise<{ people: RetrainingEntry[] }> => {
  const caller = await requireRole(event, 'coach', 'admin', 'auditor')
  return { people: await retrainingEntries(caller.organisation.id) }
})
