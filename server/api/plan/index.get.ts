// The plan matrix (learners × jobs, derived cells, coverage), filtered on the server. Coaches and admins; auditors read.
import { planQuerySchema } from '../../../shared/schemas/plan'

export default defineEventHandler(async (event) => {
  const query = queryValid(event, planQuerySchema)
  const caller = await requireRole(event, 'admin', 'coach', 'auditor')
  return planMatrix(caller.organisation.id, query)
})
