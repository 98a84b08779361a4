// Import a breakdown export document as a new job with a draft v1 (photos do not travel). Coaches and admins.
import { randomUUID } from 'node:crypto'
import { and, eq } from 'drizzle-orm'
import { breakdownVersions, jobs, workAreas } from '../../db/schema'
import { breakdownExportSchema } from '../../../shared/schemas/breakdown-export'
import type { BreakdownContent } from '../../../shared/schemas/breakdown'

function withoutPhotos(content: BreakdownContent): { content: BreakdownContent, dropped: number } {
  let dropped = 0
  const clear = (photoId: string | null) => {
    if (photoId) dropped += 1
    return null
  }
  const units = content.units.map(unit => ({
    ...unit,
    steps: unit.steps.map(step => ({
      ...step,
      photoId: clear(step.photoId),
      keyPoints: step.keyPoints.map(kp => ({ ...kp, photoId: clear(kp.photoId) })),
    })),
  }))
  return { content: { units }, dropped }
}

export default defineEventHandler(async (event) => {
  const doc = await readValid(event, breakdownExportSchema)
  const caller = await requireRole(event, 'coach', 'admin')
  const organisationId = caller.organisation.id
  const { workAreaName, ...jobFields } = doc.job
  const { content, dropped } = withoutPhotos(doc.breakdown)
  const result = await writeTransaction(async (tx) => {
    const [area] = workAreaName
      ? await tx.select({ id: workAreas.id }).from(workAreas).where(and(eq(workAreas.organisationId, organisationId), eq(workAreas.name, workAreaName))).limit(1)
      : []
    const jobId = randomUUID()
    const versionId = randomUUID()
    await tx.insert(jobs).values({ id: jobId, organisationId, ...jobFields, workAreaId: area?.id ?? null })
    await tx.insert(breakdownVersions).values({ id: versionId, organisationId, jobId, number: 1, status: 'draft', revision: 0, content, createdBy: caller.user.id })
    await recordAudit(tx, {
      organisationId,
      actorUserId: caller.user.id,
      action: 'job.imported',
      targetType: 'job',
      targetId: jobId,
      detail: { title: jobFields.title, versionId, from: { number: doc.version.number, status: doc.version.status, exportedAt: doc.exportedAt }, workAreaMatched: Boolean(area), photosDropped: dropped },
    })
    return { jobId, versionId, workAreaMatched: Boolean(area) }
  })
  setResponseStatus(event, 201)
  return { jobId: result.jobId, versionId: result.versionId, photosDropped: dropped, workAreaMatched: result.workAreaMatched }
})
