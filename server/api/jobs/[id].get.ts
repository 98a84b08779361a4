// One job with its work area and its versions, newest first. Any member (learners see no drafts).
import { idParamsSchema } from '../../../shared/schemas/common'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireSignedIn(event)
  const db = await useDb()
  const job = await findJob(db, caller.organisation.id, id)
  if (!job) throw notFound('That job')
  const versions = await jobVersions(db, caller.organisation.id, id, { drafts: caller.membership.role !== 'learner' })
  return { ...job, versions }
})
