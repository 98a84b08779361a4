// Everyone trained on an older version of this job than the current one, with what changed and what a refresher teaches. Coaches, admins and auditors.
import { idParamsSchema } from '../../../../shared/schemas/common'
import type { JobRetraining } from '../../../../shared/types/retraining'

export default defineEventHandler(async (event): Promise<JobRetraining> => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireRole(event, 'coach', 'admin', 'auditor')
  const organisationId = caller.organisation.id
  const db = await useDb()
  const job = await findJob(db, organisationId, id)
  if (!job) throw notFound('That job')
  const [published] = await jobVersions(db, organisationId, id, { drafts: false }).then(vs => vs.filter(v => v.status === 'published'))
  return {
    job: { id: job.id, title: job.title },
    current: published ? { id: published.id, number: published.number } : null,
    people: await retrainingEntries(organisationId, [id]),
  }
})
