// A per-process cache of what is derived from one organisation's data (the plan's training cells
// and coverage), the one module-level cache of the server (DEVELOPERS.md, "State"). It can never
// answer from stale data, also with several app instances on one database: before every use it
// reads the organisation's stamp from the database in one statement, and a slot is used only when
// that stamp and the local day are the ones it was built for. It holds derived data of an
// organisation only, keyed by the organisation's id — never a request, a session or a user — and
// at most a few organisations (least recently used dropped first).
import type { Client } from '@libsql/client'
import { localDay } from '../../shared/utils/training-status'

/**
 * What moves with every write that changes what the plan shows, as one text:
 * - the organisation's newest change-feed row: plan items (PUT/DELETE /api/plan), lessons and spot
 *   checks (POST /api/sync), versions published or retired, learners created or edited (archive
 *   included) all add one in the same transaction (change-feed.ts); seq only grows (AUTOINCREMENT);
 * - the number of learners: a learner added when an invitation is accepted has no feed row;
 * - every job's shown fields (title, work area, coverage target, archived): a job is created,
 *   imported or edited without a feed row when it has no published version;
 * - every work area's id and name: renamed, added or deleted (which also clears it from jobs and
 *   learners) without a feed row.
 * The jobs and work areas are read whole because an organisation has tens of them; the two lists
 * cost about 0.1 ms together on the benchmark organisation (40 jobs).
 */
const STAMP_SQL = `select json_array(
  (select max(seq) from change_feed where organisation_id = ?1),
  (select count(*) from learners where organisation_id = ?1),
  (select json_group_array(json_array(id, title, work_area_id, coverage_target, archived_at)) from jobs where organisation_id = ?1),
  (select json_group_array(json_array(id, name)) from work_areas where organisation_id = ?1)
) as stamp`

export async function organisationStamp(client: Pick<Client, 'execute'>, organisationId: string): Promise<string> {
  const result = await client.execute({ sql: STAMP_SQL, args: [organisationId] })
  return String(result.rows[0]?.stamp ?? '')
}

interface Slot<T> { stamp: string, day: string, value: Promise<T> }

/**
 * A cache of up to `maxOrganisations` values, one per organisation. `get` reads the stamp, then
 * answers the slot built for that stamp and day, or builds it (reading the data after the stamp, so
 * a write in between only makes the next request build again). Requests that arrive while a build
 * runs wait for the same build rather than starting their own; a failed build is forgotten.
 */
export function organisationCache<T>(maxOrganisations: number) {
  const slots = new Map<string, Slot<T>>()
  return {
    async get(organisationId: string, now: number, build: () => Promise<T>): Promise<T> {
      const db = await useDb()
      const stamp = await organisationStamp(db.$client, organisationId)
      const day = localDay(now)
      let slot = slots.get(organisationId)
      if (!slot || slot.stamp !== stamp || slot.day !== day) {
        const fresh: Slot<T> = { stamp, day, value: build() }
        fresh.value.catch(() => {
          if (slots.get(organisationId) === fresh) slots.delete(organisationId)
        })
        slot = fresh
      }
      // A Map keeps insertion order: re-inserting makes this the most recently used.
      slots.delete(organisationId)
      slots.set(organisationId, slot)
      while (slots.size > maxOrganisations) slots.delete(slots.keys().next().value!)
      return slot.value
    },
  }
}
