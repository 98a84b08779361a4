// An organisation's whole list of records, derived once per change of its data and shared by the
// requests of GET /api/records and its CSV, which filter, sort and page it in memory (records-list.ts).
// Reading the list is one statement (records-query.ts), but preparing and running it on every request
// cost more than everything else the route does; the stamp check costs one small statement.
// The stamp (organisation-cache.ts) moves with everything a record shows: lessons and spot checks
// (and their scores and acknowledgements) arrive through POST /api/sync with a change-feed row,
// learners are edited with one, and jobs' titles and work areas' names are in the stamp itself.
// Version numbers never change, and neither do people's names (no route renames a user): a route
// that does must move the stamp (tests/e2e/records-cache.test.ts has a case per kind of write).
import { loadOrganisationRecords } from './records-query'
import { recordsIndex, type RecordsIndex } from './records-list'

// About half a kilobyte per record held: a few organisations at most (one server usually serves one).
const recordsCache = organisationCache<RecordsIndex>(4)

/** The organisation's records, as of this request (checked against the database's stamp first). */
export async function organisationRecords(organisationId: string): Promise<RecordsIndex> {
  return recordsCache.get(organisationId, Date.now(), async () => {
    const db = await useDb()
    return recordsIndex(await loadOrganisationRecords(db.$client, organisationId))
  })
}
