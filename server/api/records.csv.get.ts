// The records matching the filters as CSV, for audits (columns: server/utils/records-csv.ts). Coaches, admins, auditors.
import { stringify } from 'csv-stringify/sync'
import { recordsFilterSchema } from '../../shared/schemas/records'

/** More than this in one file is refused with a 413 that says how to narrow it. */
const CSV_MAX_ROWS = 50_000

export default defineEventHandler(async (event) => {
  const filter = queryValid(event, recordsFilterSchema)
  const caller = await requireRole(event, 'admin', 'coach', 'auditor')
  const { rows, truncated } = matchingRecords(await organisationRecords(caller.organisation.id), filter, CSV_MAX_ROWS)
  if (truncated) throw badRequest(`More than ${CSV_MAX_ROWS.toLocaleString('en-GB')} records match. Choose a shorter date range or a job, and export in parts.`, 413)
  // Every cell quoted (OWASP CSV injection guidance, with the formula prefix in csvCell).
  const body = stringify([RECORD_CSV_COLUMNS.map(([name]) => name), ...rows.map(recordCsvCells)], { quoted: true, quoted_empty: true, record_delimiter: 'windows' })
  const day = new Date().toISOString().slice(0, 10)
  setResponseHeader(event, 'content-type', 'text/csv; charset=utf-8')
  setResponseHeader(event, 'content-disposition', `attachment; filename="fourfold-records-${day}.csv"`)
  setResponseHeader(event, 'cache-control', 'no-store')
  // A byte order mark, so spreadsheet programs read the names as UTF-8.
  return `\uFEFF${body}`
})
