// Create a job in the caller's organisation. Coaches and admins.
import { randomUUID } from 'node:crypto'
import { jobs } from '../../db/schema'
import { createJobSchema } from '../../../shared/schemas/jobs'

export default defineEventHandler(async (event) => {
  const input = await readValid(event, createJobSchema)
  const caller = await requireRole(event, 'coach', 'admin')
  const organisationId = caller.organisation.id
  const job = await writeTransaction(async (tx) => {
    await assertOwnWorkArea(tx, organisationId, input.workAreaId)
    const [row] = await tx.insert(jobs).values({ id: randomUUID(), organisationId, ...input }).returning()
    await recordAudit(tx, { organisationId, actorUserId: caller.user.id, action: 'job.created', targetType: 'job', targetId: row!.id, detail: { title: row!.title } })
    return row!
  })
  setResponseStatus(event, 201)
  return jobView(job)
})
