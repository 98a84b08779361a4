// The plan as a CSV file: one line per learner × job that is not "not needed", with the same filters as GET /api/plan. Coaches, admins, auditors.
import { stringify } from 'csv-stringify/sync'
import { planQuerySchema } from '../../shared/schemas/plan'
import { PLAN_REASON_LABELS } from '../../shared/types/plan'
import { CELL_STATUS_WORDS, localDay } from '../../shared/utils/training-status'
import { csvCell } from '../../shared/utils/csv-safe'

const PLAN_CSV_COLUMNS = ['Learner', 'Reference', 'Learner work area', 'Job', 'Job work area', 'Status', 'In words', 'Target date', 'Reason', 'Note', 'Trained on version', 'Current version', 'Ready since', 'Next spot check'] as const

export default defineEventHandler(async (event) => {
  const query = queryValid(event, planQuerySchema)
  const caller = await requireRole(event, 'admin', 'coach', 'auditor')
  const now = Date.now()
  // Every matching learner: the export is not paged.
  const matrix = await planMatrix(caller.organisation.id, { ...query, offset: 0, limit: undefined }, now)
  const learners = new Map(matrix.learners.map(l => [l.id, l]))
  const jobs = new Map(matrix.jobs.map(j => [j.id, j]))
  const order = new Map(matrix.learners.map((l, i) => [l.id, i]))
  const jobOrder = new Map(matrix.jobs.map((j, i) => [j.id, i]))
  const cells = [...matrix.cells].sort((a, b) => order.get(a.learnerId)! - order.get(b.learnerId)! || jobOrder.get(a.jobId)! - jobOrder.get(b.jobId)!)
  const day = (at: number | null) => (at == null ? '' : localDay(at))
  // Every text cell passes csvCell: names, notes and titles are typed by people (formula injection).
  const records = cells.map((c) => {
    const learner = learners.get(c.learnerId)!
    const job = jobs.get(c.jobId)!
    return [
      learner.name, learner.reference, learner.workAreaName ?? '', job.title, job.workAreaName ?? '',
      CELL_STATUS_WORDS[c.status], c.words, c.targetDate ?? '', c.reason ? PLAN_REASON_LABELS[c.reason] : '', c.note,
      c.trainedVersionNumber, job.currentVersionNumber, day(c.readySince), day(c.nextCheckAt),
    ].map(csvCell)
  })
  setResponseHeader(event, 'content-type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'content-disposition', `attachment; filename="fourfold-plan-${matrix.today}.csv"`)
  setResponseHeader(event, 'cache-control', 'no-store')
  // The byte order mark lets spreadsheet programs read the file as UTF-8.
  return stringify(records, { header: true, columns: [...PLAN_CSV_COLUMNS], bom: true, record_delimiter: 'windows' })
})
