// The columns of GET /api/records.csv: what auditors ask a training record to show. The sources
// are named beside the columns in tests/e2e/records.test.ts, which checks them.
import { csvCell } from '../../shared/utils/csv-safe'
import { RECORD_OUTCOME_WORDS, type RecordRow } from '../../shared/schemas/records'

const iso = (ms: number | null) => (ms === null ? '' : new Date(ms).toISOString())

/** What the record was about, in one line: the content the learner was trained or checked on. */
function contentSummary(r: RecordRow): string {
  if (r.kind === 'lesson') return `Job Instruction lesson (prepare, present, try-out, follow up) on "${r.jobTitle}", breakdown version ${r.versionNumber}`
  const n = r.elements ?? 0
  return `Spot check of ${n} ${n === 1 ? 'element' : 'elements'} of "${r.jobTitle}", breakdown version ${r.versionNumber}`
}

export const RECORD_CSV_COLUMNS: Array<[string, (r: RecordRow) => string | number | null]> = [
  ['record_type', r => (r.kind === 'lesson' ? 'lesson' : 'spot check')],
  ['record_id', r => r.id],
  ['learner_name', r => r.learnerName],
  ['learner_reference', r => r.learnerReference],
  // Fourfold keeps no job title for a person; their work area is the nearest thing it knows.
  ['learner_work_area', r => r.workAreaName],
  ['job', r => r.jobTitle],
  ['breakdown_version', r => r.versionNumber],
  ['content_summary', contentSummary],
  ['training_date', r => iso(r.date)],
  ['evaluation_date', r => iso(r.finishedAt)],
  ['trainer_or_evaluator', r => r.coachName],
  ['outcome', r => RECORD_OUTCOME_WORDS[r.outcome]],
  ['readiness_suggested', r => (r.readiness === null ? '' : r.readiness === 'ready' ? 'ready' : 'another pass')],
  ['recall_score', r => r.recall],
  ['acknowledged_by_learner', r => r.acknowledgedBy],
  ['acknowledged_at', r => iso(r.acknowledgedAt)],
  ['place', r => r.place],
]

export function recordCsvCells(r: RecordRow): Array<string | number> {
  return RECORD_CSV_COLUMNS.map(([, cell]) => csvCell(cell(r)))
}
