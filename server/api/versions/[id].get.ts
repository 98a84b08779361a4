// One breakdown version with its content and job. Admins, coaches and auditors; learners only published or retired versions (a draft answers 404 to them).
import { idParamsSchema } from '../../../shared/schemas/common'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireSignedIn(event)
  const db = await useDb()
  const version = await findVersion(db, caller.organisation.id, id)
  // A draft is not there for a learner yet, so it answers as a missing version would.
  if (!version || (caller.membership.role === 'learner' && version.status === 'draft')) throw notFound('That breakdown version')
  return version
})
