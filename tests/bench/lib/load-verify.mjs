// After a load run, with every server stopped: does the database file hold exactly what the
// servers acknowledged? Read straight from the file (@libsql/client, one connection, query_only),
// compared with the tablets' ledger (load-tablets.mjs).
import { createHash } from 'node:crypto'
import { createClient } from '@libsql/client'

/** What the database row of an event must read: the fields the tablet sent, in one digest. */
export function eventFingerprint(e) {
  return createHash('md5').update(JSON.stringify([e.id, e.lessonId, e.pass, e.elementId, e.kind, e.value, e.clientTime, e.deviceId, e.seq])).digest('base64')
}

const PAGE = 20_000
const COLUMNS = 'id, organisation_id, lesson_id, pass, element_id, kind, value, client_time, device_id, seq'

/**
 * Every lesson_events and lessons row against the ledger:
 * - lost: acknowledged ids with no row;
 * - doubled: ids stored more than once, and rows whose content differs from what the tablet sent;
 * - extra: rows of ids never acknowledged — `explained` when the id was in a push left without any
 *   answer (the server may have committed it just before the connection failed), otherwise
 *   `unexplained`; `strangers` are rows of ids no tablet sent at all.
 * Lessons likewise (their content is the newest acknowledged copy's updatedAt), and every lesson's
 * stored score must count exactly the events stored for it.
 */
export async function verifyDatabase(databaseUrl, ledger, organisationId) {
  const db = createClient({ url: databaseUrl, concurrency: 1 })
  try {
    await db.execute('PRAGMA query_only = 1')
    const out = {
      events: { rows: 0, acknowledged: ledger.ackedEvents.size, lost: 0, duplicates: 0, differing: 0, extraExplained: 0, extraUnexplained: 0, strangers: 0, otherOrganisation: 0 },
      lessons: { rows: 0, acknowledged: 0, lost: 0, duplicates: 0, differing: 0, extraExplained: 0, extraUnexplained: 0, strangers: 0, otherOrganisation: 0, scoreMismatch: 0 },
    }
    const e = out.events
    e.duplicates = Number((await db.execute('select count(*) - count(distinct id) as d from lesson_events')).rows[0].d)
    let found = 0
    for (let after = ''; ;) {
      const row = (await db.execute({
        sql: `select json_group_array(json_array(${COLUMNS})) as rows, count(*) as n, max(id) as last from (select ${COLUMNS} from lesson_events where id > ? order by id limit ?)`,
        args: [after, PAGE],
      })).rows[0]
      for (const [id, org, lessonId, pass, elementId, kind, value, clientTime, deviceId, seq] of JSON.parse(row.rows)) {
        e.rows++
        if (org !== organisationId) e.otherOrganisation++
        const sent = ledger.sentEvents.get(id)
        if (sent === undefined) {
          e.strangers++
          continue
        }
        if (eventFingerprint({ id, lessonId, pass, elementId, kind, value, clientTime, deviceId, seq }) !== sent) e.differing++
        if (ledger.ackedEvents.has(id)) found++
        else if (ledger.unsettledEvents.has(id)) e.extraExplained++
        else e.extraUnexplained++
      }
      if (Number(row.n) < PAGE) break
      after = row.last
    }
    e.lost = ledger.ackedEvents.size - found

    const l = out.lessons
    l.duplicates = Number((await db.execute('select count(*) - count(distinct id) as d from lessons')).rows[0].d)
    const { rows } = await db.execute(`select json_group_array(json_array(l.id, l.organisation_id, l.client_updated_at, s.event_count,
      (select count(*) from lesson_events e where e.lesson_id = l.id))) as rows from lessons l left join lesson_scores s on s.lesson_id = l.id`)
    const stored = new Map()
    for (const [id, org, updatedAt, scoreCount, eventCount] of JSON.parse(rows[0].rows)) {
      l.rows++
      stored.set(id, updatedAt)
      if (org !== organisationId) l.otherOrganisation++
      if (scoreCount !== eventCount) l.scoreMismatch++
      const entry = ledger.lessons.get(id)
      if (!entry) {
        l.strangers++
        continue
      }
      if (entry.acked === null) {
        if (entry.unsettled.includes(updatedAt)) l.extraExplained++
        else l.extraUnexplained++
      }
      // A copy newer than the acknowledged one may have gone in from a push that had no answer.
      else if (updatedAt !== entry.acked && !(updatedAt > entry.acked && entry.unsettled.includes(updatedAt))) l.differing++
    }
    for (const [id, entry] of ledger.lessons) {
      if (entry.acked === null) continue
      l.acknowledged++
      if (!stored.has(id)) l.lost++
    }
    return { ...out, lost: e.lost + l.lost, doubled: e.duplicates + e.differing + l.duplicates + l.differing, unexplained: e.extraUnexplained + e.strangers + e.otherOrganisation + l.extraUnexplained + l.strangers + l.otherOrganisation + l.scoreMismatch }
  }
  finally {
    db.close()
  }
}
