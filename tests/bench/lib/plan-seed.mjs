// The plan benchmark's organisation, written straight into a fresh, migrated SQLite file before the
// server starts: 500 learners, 40 jobs (some on a second version), about three lessons per learner
// with their events and stored scores, spot checks with their marks, and plan items. Scores and
// check outcomes come from the project's own shared rules (loaded with jiti), so the rows are what
// sync would have stored. A fixed seed gives the same kind of data on every run.
import { randomUUID } from 'node:crypto'
import { join } from 'node:path'
import { createClient } from '@libsql/client'
import { drizzle } from 'drizzle-orm/libsql'
import { migrate } from 'drizzle-orm/libsql/migrator'
import { createJiti } from 'jiti'
import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'
import { root } from './build.mjs'
import { breakdownContent } from './sync-records.mjs'
import { PASSWORD } from './http.mjs'

const jiti = createJiti(import.meta.url)
const { replayLesson } = await jiti.import(`${root}/shared/utils/lesson-state.ts`)
const schedule = await jiti.import(`${root}/shared/utils/spot-check-schedule.ts`)
const { PASSWORD_SCRYPT_SETTINGS } = await jiti.import(`${root}/server/utils/password-settings.ts`)
const { PLAN_REASONS } = await jiti.import(`${root}/shared/types/plan.ts`)

const DAY = 86_400_000
/** Rows per multi-row insert: far under SQLite's 32,766 bound variables for every table here. */
const CHUNK = 200

export const ADMIN_EMAIL = 'bench-admin@fourfold.example'

function xorshift(seed) {
  let s = seed >>> 0 || 1
  return () => {
    s ^= s << 13
    s ^= s >>> 17
    s ^= s << 5
    return (s >>> 0) / 4_294_967_296
  }
}

async function insertRows(tx, table, rows) {
  if (!rows.length) return
  const columns = Object.keys(rows[0])
  for (let i = 0; i < rows.length; i += CHUNK) {
    const part = rows.slice(i, i + CHUNK)
    await tx.execute({
      sql: `insert into ${table} (${columns.join(',')}) values ${part.map(() => `(${columns.map(() => '?').join(',')})`).join(',')}`,
      args: part.flatMap(r => columns.map(c => r[c])),
    })
  }
}

/**
 * Migrates a fresh file at `dir`/fourfold.db and fills it. Returns the database URL and counts.
 * `now` is the bench's clock: lessons lie in the 200 days before it, checks after them.
 */
export async function seedPlanOrganisation(dir, { learners: learnerCount = 500, jobs: jobCount = 40, lessonsPerLearner = 3, now = Date.now(), seed = 20261202 } = {}) {
  const databaseUrl = `file:${join(dir, 'fourfold.db')}`
  const client = createClient({ url: databaseUrl, timeout: 5000 })
  await client.execute('PRAGMA journal_mode = WAL')
  await migrate(drizzle(client), { migrationsFolder: join(root, 'drizzle') })
  const rand = xorshift(seed)
  const pick = list => list[Math.floor(rand() * list.length)]
  const organisationId = randomUUID()
  const hash = await new Hash(new Scrypt({ ...PASSWORD_SCRYPT_SETTINGS })).make(PASSWORD)

  const people = [
    { id: randomUUID(), email: ADMIN_EMAIL, name: 'Bench Admin', role: 'admin' },
    ...Array.from({ length: 6 }, (_, i) => ({ id: randomUUID(), email: `bench-coach-${i}@fourfold.example`, name: `Bench Coach ${i + 1}`, role: 'coach' })),
    { id: randomUUID(), email: 'bench-auditor@fourfold.example', name: 'Bench Auditor', role: 'auditor' },
  ]
  const coaches = people.filter(p => p.role !== 'auditor')
  const areas = ['Bake line', 'Slicing and bagging', 'Maintenance'].map(name => ({ id: randomUUID(), organisation_id: organisationId, name }))

  // Jobs: each with a published version; every fourth job also has a newer one, so people trained
  // on the older version show as "re-teach".
  const jobs = []
  const versions = []
  const currentOf = new Map()
  const allVersionsOf = new Map()
  for (let j = 0; j < jobCount; j++) {
    const jobId = randomUUID()
    jobs.push({ id: jobId, organisation_id: organisationId, work_area_id: areas[j % areas.length].id, title: `Bench job ${String(j + 1).padStart(2, '0')}`, coverage_target: 2 + (j % 3) })
    const content = breakdownContent()
    const count = j % 4 === 0 ? 2 : 1
    const list = []
    for (let n = 1; n <= count; n++) {
      const v = { id: randomUUID(), organisation_id: organisationId, job_id: jobId, number: n, status: n === count ? 'published' : 'retired', content: JSON.stringify(content), revision: 1, change_note: n === 1 ? 'First version.' : 'Revised.', published_at: now - (count - n + 1) * 100 * DAY, retired_at: n === count ? null : now - 100 * DAY }
      versions.push(v)
      list.push({ ...v, parsed: content })
    }
    allVersionsOf.set(jobId, list)
    currentOf.set(jobId, list.at(-1))
  }

  const learners = Array.from({ length: learnerCount }, (_, i) => ({ id: randomUUID(), organisation_id: organisationId, name: `Bench Learner ${String(i + 1).padStart(3, '0')}`, work_area_id: areas[i % areas.length].id, reference: `BL-${String(i + 1).padStart(4, '0')}` }))

  const planItems = []
  const lessons = []
  const events = []
  const scores = []
  const checks = []
  const checkEvents = []
  let seq = 0
  for (const learner of learners) {
    // About three jobs per learner, each planned, most with a lesson.
    const jobIds = new Set()
    while (jobIds.size < lessonsPerLearner) jobIds.add(pick(jobs).id)
    for (const jobId of jobIds) {
      const started = now - Math.floor(rand() * 200) * DAY - Math.floor(rand() * 8 * 3_600_000)
      planItems.push({ id: randomUUID(), organisation_id: organisationId, learner_id: learner.id, job_id: jobId, target_date: new Date(started + 30 * DAY).toISOString().slice(0, 10), reason: pick(PLAN_REASONS), note: '' })
      if (rand() < 0.1) continue // planned only
      const version = pick(allVersionsOf.get(jobId))
      const coach = pick(coaches)
      const lessonId = randomUUID()
      const deviceId = randomUUID()
      const steps = version.parsed.units.flatMap(u => u.steps)
      const kps = steps.flatMap(s => s.keyPoints)
      const lessonEvents = []
      let t = started
      const ev = (pass, kind, elementId, value) => {
        seq += 1
        t += 4000
        lessonEvents.push({ id: randomUUID(), organisation_id: organisationId, lesson_id: lessonId, pass, element_id: elementId, kind, value, client_time: t, device_id: deviceId, seq, received_at: t })
      }
      const markOf = () => {
        const r = rand()
        return r < 0.85 ? 'unaided' : r < 0.95 ? 'cued' : 'missed'
      }
      for (const p of ['P1-1', 'P2-1', 'P3-1']) for (const s of steps) ev(p, 'present', s.id, null)
      for (const s of steps) ev('T1-1', 'mark', s.id, markOf())
      ev('T2-1', 'order-all', null, null)
      for (const s of steps) ev('T2-1', 'mark', s.id, markOf())
      for (const k of kps) ev('T3-1', 'mark', k.id, markOf())
      for (const k of kps.filter(k => k.reason)) ev('T4-1', 'mark', k.id, markOf())
      for (const p of ['T1-1', 'T2-1', 'T3-1', 'T4-1']) ev(p, 'pass-close', null, null)
      const inProgress = rand() < 0.08
      const state = replayLesson(lessonEvents.map(e => ({ id: e.id, lessonId, pass: e.pass, elementId: e.element_id, kind: e.kind, value: e.value, clientTime: e.client_time, deviceId, seq: e.seq })), version.parsed)
      const decision = inProgress ? null : state.readiness.suggestion
      const signedOff = inProgress ? null : t + 60_000
      lessons.push({
        id: lessonId, organisation_id: organisationId, coach_user_id: coach.id, learner_id: learner.id, job_id: jobId, version_id: version.id,
        place: 'Bench line', started_at: started, prepare: '{}', helper: 'Bench Coach 1', decision, acknowledgement: signedOff ? JSON.stringify({ name: learner.name, signature: null, at: signedOff }) : null,
        signed_off_at: signedOff, stage_seconds: JSON.stringify({ prepare: 120, present: 600, tryout: 900, followup: 180 }), client_updated_at: t, updated_by_device: deviceId,
      })
      events.push(...lessonEvents)
      const s = state.scores
      scores.push({ lesson_id: lessonId, organisation_id: organisationId, t1: s.T1, t2: s.T2, t3: s.T3, t4: s.T4, order_score: s.order, recall: s.recall, readiness: state.readiness.suggestion, represent: JSON.stringify(state.readiness.represent), event_count: lessonEvents.length, computed_at: t })

      // Spot checks after a "ready" lesson, on the tapering schedule, while they would be due before now.
      if (decision !== 'ready') continue
      let index = 0
      let due = schedule.firstCheckDate(new Date(signedOff)).getTime()
      while (due < now - DAY && rand() < 0.8) {
        const checkId = randomUUID()
        const chosen = [...steps.slice(0, 2).map(x => x.id), ...kps.filter(k => k.kind === 'safety').map(k => k.id)]
        const marks = chosen.map(() => (rand() < 0.9 ? 'unaided' : 'cued'))
        const checkStart = due + 2 * 3_600_000
        marks.forEach((value, i) => {
          seq += 1
          checkEvents.push({ id: randomUUID(), organisation_id: organisationId, check_id: checkId, element_id: chosen[i], kind: 'mark', value, client_time: checkStart + i * 5000, device_id: deviceId, seq, received_at: checkStart })
        })
        const outcome = schedule.checkOutcome(marks.map((value, i) => ({ value, safety: i >= 2 })))
        const next = schedule.nextIntervalIndex(index, outcome)
        const finished = checkStart + 600_000
        const nextDue = schedule.nextCheckDate(new Date(finished), next).getTime()
        checks.push({ id: checkId, organisation_id: organisationId, coach_user_id: coach.id, learner_id: learner.id, job_id: jobId, version_id: version.id, lesson_id: lessonId, started_at: checkStart, elements: JSON.stringify(chosen), note: '', finished_at: finished, outcome, interval_index: index, next_interval_index: next, next_due_at: nextDue, client_updated_at: finished, updated_by_device: deviceId })
        index = next
        due = nextDue
        if (outcome === 'reteach') break
      }
    }
  }

  const tx = await client.transaction('write')
  try {
    await insertRows(tx, 'organisations', [{ id: organisationId, name: 'Bench Bakery', coaches_may_publish: 1 }])
    await insertRows(tx, 'users', people.map(p => ({ id: p.id, email: p.email, name: p.name, password_hash: hash, password_changed_at: now - DAY })))
    await insertRows(tx, 'memberships', people.map(p => ({ id: randomUUID(), organisation_id: organisationId, user_id: p.id, role: p.role })))
    await insertRows(tx, 'work_areas', areas)
    await insertRows(tx, 'jobs', jobs)
    await insertRows(tx, 'breakdown_versions', versions)
    await insertRows(tx, 'learners', learners)
    await insertRows(tx, 'plan_items', planItems)
    await insertRows(tx, 'lessons', lessons)
    await insertRows(tx, 'lesson_events', events)
    await insertRows(tx, 'lesson_scores', scores)
    await insertRows(tx, 'spot_checks', checks)
    await insertRows(tx, 'check_events', checkEvents)
    await tx.commit()
  }
  finally {
    tx.close()
  }
  await client.execute('PRAGMA wal_checkpoint(TRUNCATE)')
  client.close()
  return { databaseUrl, counts: { learners: learners.length, jobs: jobs.length, versions: versions.length, planItems: planItems.length, lessons: lessons.length, lessonEvents: events.length, spotChecks: checks.length, checkEvents: checkEvents.length } }
}
