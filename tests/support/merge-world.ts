// An in-process SQLite world for testing the sync merge without HTTP: the real migrations,
// one organisation with a coach, a learner, a job and a published breakdown.
import { randomUUID } from 'node:crypto'
import { mkdtempSync } from 'node:fs'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { createClient, type Client } from '@libsql/client'
import { drizzle } from 'drizzle-orm/libsql'
import { migrate } from 'drizzle-orm/libsql/migrator'
import type { BreakdownContent } from '../../shared/schemas/breakdown'

export interface World { client: Client, organisationId: string, coachUserId: string, learnerId: string, jobId: string, versionId: string, content: BreakdownContent }

/** A fresh world; give it another world's ids to compare the two row by row. */
export async function makeWorld(content: BreakdownContent, sameIdsAs?: World): Promise<World> {
  const dir = mkdtempSync(join(tmpdir(), 'fourfold-merge-'))
  const client = createClient({ url: `file:${join(dir, 'db.sqlite')}`, timeout: 5000 })
  await client.execute('PRAGMA journal_mode = WAL')
  await migrate(drizzle(client), { migrationsFolder: 'drizzle' })
  const w = sameIdsAs
    ? { organisationId: sameIdsAs.organisationId, coachUserId: sameIdsAs.coachUserId, learnerId: sameIdsAs.learnerId, jobId: sameIdsAs.jobId, versionId: sameIdsAs.versionId }
    : { organisationId: randomUUID(), coachUserId: randomUUID(), learnerId: randomUUID(), jobId: randomUUID(), versionId: randomUUID() }
  const now = Date.now()
  await client.batch([
    { sql: 'insert into organisations (id, name) values (?, ?)', args: [w.organisationId, 'Merge test bakery'] },
    { sql: 'insert into users (id, email, name, password_hash, password_changed_at) values (?, ?, ?, ?, ?)', args: [w.coachUserId, `${w.coachUserId}@test.example`, 'Coach', 'x', now] },
    { sql: 'insert into memberships (id, organisation_id, user_id, role) values (?, ?, ?, ?)', args: [randomUUID(), w.organisationId, w.coachUserId, 'coach'] },
    { sql: 'insert into learners (id, organisation_id, name) values (?, ?, ?)', args: [w.learnerId, w.organisationId, 'Learner'] },
    { sql: 'insert into jobs (id, organisation_id, title) values (?, ?, ?)', args: [w.jobId, w.organisationId, 'Change the slicer blade set'] },
    { sql: 'insert into breakdown_versions (id, organisation_id, job_id, number, status, content) values (?, ?, ?, 1, \'published\', ?)', args: [w.versionId, w.organisationId, w.jobId, JSON.stringify(content)] },
  ], 'write')
  return { client, ...w, content }
}

/** The rows a merge leaves for some lessons, without the columns that record arrival time. */
export async function lessonRows(client: Client, lessonIds: string[]) {
  const q = lessonIds.map(() => '?').join(',')
  const lessons = (await client.execute({ sql: `select id, coach_user_id, learner_id, job_id, version_id, place, started_at, prepare, helper, decision, acknowledgement, signed_off_at, stage_seconds, client_updated_at, updated_by_device from lessons where id in (${q}) order by id`, args: lessonIds })).rows
  const events = (await client.execute({ sql: `select id, lesson_id, pass, element_id, kind, value, client_time, device_id, seq from lesson_events where lesson_id in (${q}) order by id`, args: lessonIds })).rows
  const scores = (await client.execute({ sql: `select lesson_id, t1, t2, t3, t4, order_score, recall, readiness, represent, event_count from lesson_scores where lesson_id in (${q}) order by lesson_id`, args: lessonIds })).rows
  return JSON.parse(JSON.stringify({ lessons, events, scores }))
}

/** The rows a merge leaves for some spot checks and their marks, without arrival times. */
export async function checkRows(client: Client, checkIds: string[]) {
  const q = checkIds.map(() => '?').join(',')
  const checks = (await client.execute({ sql: `select id, coach_user_id, learner_id, job_id, version_id, lesson_id, started_at, elements, note, finished_at, outcome, interval_index, next_interval_index, next_due_at, client_updated_at, updated_by_device from spot_checks where id in (${q}) order by id`, args: checkIds })).rows
  const events = (await client.execute({ sql: `select id, check_id, element_id, kind, value, client_time, device_id, seq from check_events where check_id in (${q}) order by id`, args: checkIds })).rows
  const feed = (await client.execute({ sql: `select count(*) as n from change_feed where entity = 'check' and entity_id in (${q})`, args: checkIds })).rows[0]!.n
  return JSON.parse(JSON.stringify({ checks, events, fed: Number(feed) > 0 }))
}
