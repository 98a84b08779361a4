// Every lesson and spot check of the organisation, filtered, sorted and paged. Coaches, admins, auditors.
import { recordsFilterSchema, recordsPageSchema, type RecordsPage } from '../../../shared/schemas/records'

export default defineEventHandler(async (event): Promise<RecordsPage> => {
  const filter = queryValid(event, recordsFilterSchema)
  const page = queryValid(event, recordsPageSchema)
  const caller = await requireRole(event, 'admin', 'coach', 'auditor')
  return recordsPageOf(await organisationRecords(caller.organisation.id), filter, page)
})
