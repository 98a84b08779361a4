// A job's breakdown versions, newest first, drafts included. Coaches, admins and auditors.
import { idParamsSchema } from '../../../../shared/schemas/common'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireRole(event, 'coach', 'admin', 'auditor')
  const db = await useDb()
  if (!(await findJob(db, caller.organisation.id, id))) throw notFound('That job')
  return jobVersions(db, caller.organisation.id, id, { drafts: true })
})
