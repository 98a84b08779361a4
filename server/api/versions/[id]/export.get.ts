// Download one version with its job as a breakdown export document (shared/schemas/breakdown-export.ts). Admins, coaches and auditors.
import { idParamsSchema } from '../../../../shared/schemas/common'
import { BREAKDOWN_EXPORT_FORMAT, BREAKDOWN_EXPORT_FORMAT_VERSION, type BreakdownExport } from '../../../../shared/schemas/breakdown-export'

function fileName(title: string, number: number) {
  const slug = title.normalize('NFKD').replace(/[^\w\s-]/g, '').trim().toLowerCase().replace(/[\s_-]+/g, '-').slice(0, 60) || 'job'
  return `fourfold-${slug}-v${number}.json`
}

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const caller = await requireRole(event, 'admin', 'coach', 'auditor')
  const db = await useDb()
  const version = await findVersion(db, caller.organisation.id, id)
  if (!version) throw notFound('That breakdown version')
  const { job } = version
  const doc: BreakdownExport = {
    format: BREAKDOWN_EXPORT_FORMAT,
    formatVersion: BREAKDOWN_EXPORT_FORMAT_VERSION,
    exportedAt: new Date().toISOString(),
    job: {
      title: job.title,
      purpose: job.purpose,
      hazards: job.hazards,
      ppe: job.ppe,
      toolsAndMaterials: job.toolsAndMaterials,
      workplaceArrangement: job.workplaceArrangement,
      coverageTarget: job.coverageTarget,
      workAreaName: job.workAreaName,
    },
    version: {
      number: version.number,
      status: version.status,
      changeNote: version.changeNote,
      publishedAt: version.publishedAt?.toISOString() ?? null,
    },
    breakdown: version.content,
  }
  setResponseHeader(event, 'content-type', 'application/json; charset=utf-8')
  setResponseHeader(event, 'content-disposition', `attachment; filename="${fileName(job.title, version.number)}"`)
  return doc
})
