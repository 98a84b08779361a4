// The sync write path, measured against the built server in one run (issue 5).
//
//   npm run bench:sync                     uses the existing .output build (builds it under the build lock if missing)
//   npm run bench:sync -- --build          rebuilds first (npx nuxt build, under the build lock)
//   ... -- --pushes 5 --events 10000       measured pushes and events per push (1–20, 1,000–20,000)
//   ... -- --output DIR                    runs another build's output folder instead (to compare two builds)
//   ... -- --cpu-prof                      the server writes a V8 CPU profile to a folder in the temp folder (kept)
//
// One coach's tablet pushes `--pushes` bodies of `--events` realistic events each (a few lessons
// per push against a published breakdown of 6 steps and 12 key points: presentations, try-outs
// T1–T4 marked unaided/cued/missed, step order, undos; one device's clientTime and seq) through
// POST /api/sync. Beside each push, the same event rows go into a fresh SQLite file through the
// same libSQL client as a raw baseline: one write transaction, one prepared insert executed per
// row, commit. Then the same bodies are sent again (replay): nothing may change. Two loops in a
// worker thread send GET /api/learners with a session all through the pushes and the replay; the server's
// memory is sampled from /proc. Traffic goes to 127.0.0.1 only. A table is printed for people;
// the very last line is one JSON object (DESIGN §6).
import { createHash } from 'node:crypto'
import { Agent, request as httpRequest } from 'node:http'
import { existsSync } from 'node:fs'
import { mkdir } from 'node:fs/promises'
import { cpus, tmpdir } from 'node:os'
import { join, resolve } from 'node:path'
import { performance } from 'node:perf_hooks'
import { createClient } from '@libsql/client'
import { drizzle } from 'drizzle-orm/libsql'
import { migrate } from 'drizzle-orm/libsql/migrator'
import { ensureBuild, root, snapshotBuild } from './lib/build.mjs'
import { LESSONS_PER_PUSH, CONTINUED_LESSONS, breakdownContent, makeTablet } from './lib/sync-records.mjs'
import { cleanUp, makeTempDir, sleep } from './lib/cleanup.mjs'
import { startGetLoops } from './lib/get-loop.mjs'
import { addLearners, addMember, publishBreakdown, signIn, signUp } from './lib/http.mjs'
import { loadAverage, percentile, processCpuSeconds, processMemoryMb, round, table } from './lib/report.mjs'
import { reportServers, startServer } from './lib/server.mjs'

const GET_PATH = '/api/learners'
const GET_LOOPS = 2 // concurrent GET loops, each waiting for its answer
const GET_PAUSE_MS = 5 // between one GET's answer and the loop's next request
const GET_ALONE_MS = 2000 // the GET loops with nothing else running, for comparison
const MEMORY_SAMPLE_MS = 50
const PUSH_TIMEOUT_MS = 120_000
const RUN_TIMEOUT_MS = 10 * 60_000 // from the server's start (a build has its own limit)
const GOALS = { sync_vs_raw: 0.6, replay_vs_first: 1.0, get_p99_ms_during_sync: 50 }

const args = process.argv.slice(2)
const forceBuild = args.includes('--build')
const cpuProf = args.includes('--cpu-prof')
const pushCount = intOption('--pushes', 5, 1, 20)
const eventsPerPush = intOption('--events', 10_000, 1000, 20_000)
const otherOutput = stringOption('--output')

function stringOption(name) {
  const i = args.indexOf(name)
  if (i === -1) return undefined
  const value = args[i + 1]
  if (!value || !existsSync(join(value, 'server/index.mjs'))) throw new Error(`${name} takes a build's output folder (with server/index.mjs)`)
  return resolve(value)
}

function intOption(name, fallback, min, max) {
  const i = args.indexOf(name)
  if (i === -1) return fallback
  const value = Number(args[i + 1])
  if (!Number.isInteger(value) || value < min || value > max) throw new Error(`${name} takes a whole number from ${min} to ${max}`)
  return value
}

const log = (...parts) => console.log(...parts)

// ---- HTTP: the pushes and the concurrent GET loop -------------------------------------------

const agent = new Agent({ keepAlive: true, maxSockets: 4 })

/** One request over a kept-alive connection; resolves with status, body text and milliseconds. */
function timedRequest(server, method, path, { cookie, body, timeoutMs = 30_000 } = {}) {
  const url = new URL(path, server.url)
  return new Promise((resolve, reject) => {
    const started = performance.now()
    const req = httpRequest(url, {
      method,
      agent,
      timeout: timeoutMs,
      headers: {
        cookie,
        'x-forwarded-for': '198.18.0.1',
        ...(body === undefined ? {} : { 'content-type': 'application/json', 'content-length': Buffer.byteLength(body) }),
      },
    }, (res) => {
      const chunks = []
      res.on('data', c => chunks.push(c))
      res.on('end', () => resolve({ status: res.statusCode, text: Buffer.concat(chunks).toString('utf8'), ms: performance.now() - started }))
      res.on('error', reject)
    })
    req.on('timeout', () => req.destroy(new Error(`${method} ${path} timed out after ${timeoutMs} ms`)))
    req.on('error', reject)
    req.end(body)
  })
}

/** The GET loops, in a worker thread (lib/get-loop.mjs); resolves once they run. */
async function getLoop(server, cookie) {
  const loops = startGetLoops({ url: `${server.url}${GET_PATH}`, cookie, loops: GET_LOOPS, pauseMs: GET_PAUSE_MS })
  await loops.started
  return loops
}

async function push(server, cookie, item, what) {
  const res = await timedRequest(server, 'POST', '/api/sync', { cookie, body: item.json, timeoutMs: PUSH_TIMEOUT_MS })
  if (res.status !== 200) throw new Error(`${what} answered ${res.status}: ${res.text.slice(0, 2000)}`)
  const answer = JSON.parse(res.text)
  const expected = item.body.lessons.length + item.body.events.length
  if (answer.rejected.length || answer.accepted.length !== expected) {
    throw new Error(`${what}: ${answer.accepted.length} of ${expected} accepted; rejected ${JSON.stringify(answer.rejected.slice(0, 5))}`)
  }
  return { ms: res.ms, answer }
}

// ---- the database files --------------------------------------------------------------------

const SYNC_TABLES = [['lessons', 'id'], ['lesson_events', 'id'], ['lesson_scores', 'lesson_id'], ['change_feed', 'seq']]

/**
 * Every row of the sync tables, read from the server's file: per table its row count and a
 * SHA-256 of each row (by primary key), and one SHA-256 over all of them as the checksum.
 */
async function snapshotRows(databaseUrl) {
  const db = createClient({ url: databaseUrl, timeout: 5000 })
  try {
    const out = { rows: new Map() }
    const all = createHash('sha256')
    for (const [tableName, key] of SYNC_TABLES) {
      const { rows, columns } = await db.execute(`select * from ${tableName} order by ${key}`)
      out[tableName] = rows.length
      for (const row of rows) {
        const text = JSON.stringify(columns.map(c => (typeof row[c] === 'bigint' ? String(row[c]) : row[c])))
        all.update(`${tableName}\n${text}\n`)
        out.rows.set(`${tableName}:${row[key]}`, createHash('sha256').update(text).digest('base64'))
      }
    }
    out.checksum = all.digest('hex')
    return out
  }
  finally {
    db.close()
  }
}

/** Rows added, removed or changed between two snapshots. */
function rowsChanged(before, after) {
  let changed = 0
  for (const [key, hash] of after.rows) if (before.rows.get(key) !== hash) changed++
  for (const key of before.rows.keys()) if (!after.rows.has(key)) changed++
  return changed
}

/** A fresh SQLite file with the project's schema (the committed migrations), WAL as on the server. */
async function rawDatabase() {
  const dir = await makeTempDir('fourfold-bench-raw-')
  const client = createClient({ url: `file:${join(dir, 'raw.db')}`, timeout: 5000 })
  await client.execute('PRAGMA journal_mode = WAL')
  await migrate(drizzle(client), { migrationsFolder: join(root, 'drizzle') })
  return client
}

const EVENT_INSERT = 'insert into lesson_events (id, organisation_id, lesson_id, pass, element_id, kind, value, client_time, device_id, seq, received_at) values (?,?,?,?,?,?,?,?,?,?,?)'

/**
 * The lessons' rows (the events' foreign key needs them) copied from the server's file; not timed.
 * Their own parents (organisation, learner, job, version) are not copied, so foreign keys are off
 * for this copy only (the client's migrate() does that); the timed event inserts check them.
 */
async function copyLessons(serverUrl, raw, lessonIds) {
  const db = createClient({ url: serverUrl, timeout: 5000 })
  try {
    const { rows, columns } = await db.execute({ sql: `select * from lessons where id in (${lessonIds.map(() => '?').join(',')})`, args: lessonIds })
    await raw.migrate(rows.map(row => ({ sql: `insert or replace into lessons (${columns.join(',')}) values (${columns.map(() => '?').join(',')})`, args: columns.map(c => row[c]) })))
  }
  finally {
    db.close()
  }
}

/** The raw baseline: one write transaction, the prepared insert executed once per row, commit. */
async function rawInsert(raw, organisationId, events) {
  const now = Date.now()
  const started = performance.now()
  const tx = await raw.transaction('write')
  try {
    for (const e of events) {
      await tx.execute({ sql: EVENT_INSERT, args: [e.id, organisationId, e.lessonId, e.pass, e.elementId, e.kind, e.value, e.clientTime, e.deviceId, e.seq, now] })
    }
    await tx.commit()
  }
  finally {
    tx.close()
  }
  return performance.now() - started
}

// ---- main ----------------------------------------------------------------------------------

function memorySampler(pid) {
  let peakRss = 0
  const sample = () => {
    const { rss } = processMemoryMb(pid)
    if (rss !== null && rss > peakRss) peakRss = rss
  }
  sample()
  const timer = setInterval(sample, MEMORY_SAMPLE_MS)
  timer.unref() // never what keeps the process alive after a failure
  return {
    stop() {
      clearInterval(timer)
      sample()
      const { hwm } = processMemoryMb(pid)
      return { sampledPeak: peakRss, hwm }
    },
  }
}

const stats = (list) => {
  const sorted = [...list].sort((a, b) => a - b)
  return { count: sorted.length, p50: percentile(sorted, 50), p95: percentile(sorted, 95), p99: percentile(sorted, 99), max: sorted.at(-1) ?? Number.NaN }
}

async function main() {
  const build = otherOutput ? `${otherOutput} (--output)` : await ensureBuild({ forceBuild, lock: true, log })
  const entry = otherOutput ? await snapshotBuild({ from: otherOutput }) : await snapshotBuild({ lock: true })
  log(`Build: ${build}; the server runs from a private copy`)
  guard = setTimeout(() => {
    console.error(`\nsync benchmark: still running after ${RUN_TIMEOUT_MS / 60_000} minutes; stopping`)
    cleanUp().finally(() => process.exit(1))
  }, RUN_TIMEOUT_MS)
  const loadBefore = loadAverage()
  log(`Machine: ${cpus().length} CPUs, Node ${process.version}; load average ${loadBefore}`)
  log(`${pushCount} pushes × ${eventsPerPush} events (${LESSONS_PER_PUSH} lessons each, ${CONTINUED_LESSONS} carried on into the next push), after one warm-up push; then the same pushes again`)

  let profileDir
  if (cpuProf) {
    // Kept after the run (outside the checkout), for Chrome DevTools.
    profileDir = join(tmpdir(), `fourfold-sync-profile-${Date.now()}`)
    await mkdir(profileDir, { recursive: true })
  }
  const server = await startServer(entry, 'sync', {}, { nodeArgs: cpuProf ? ['--cpu-prof', `--cpu-prof-dir=${profileDir}`] : [] })
  const memory = memorySampler(server.child.pid)

  // An organisation, its coach, a published breakdown and a few learners, through the API.
  const stamp = Date.now().toString(36)
  const admin = await signUp(server, `admin-${stamp}@bench.example`, { organisation: 'Harbour Bakery (bench)' })
  const adminCookie = await signIn(server, `admin-${stamp}@bench.example`)
  const coach = await addMember(server, adminCookie, `coach-${stamp}@bench.example`, 'coach', 'Bench Coach')
  const content = breakdownContent()
  const { jobId, versionId } = await publishBreakdown(server, coach.cookie, adminCookie, content)
  const learnerIds = await addLearners(server, coach.cookie, ['Ilse Brannagh', 'Tomasz Weller', 'Ama Osei', 'Joris Vaak', 'Lena Stroud', 'Kofi Mensah'])
  const organisationId = admin.organisation.id
  const ids = { coachUserId: coach.userId, jobId, versionId }

  const tablet = makeTablet(ids, content, 0x5eed1234)
  const [warmup, ...pushes] = tablet.pushes(1 + pushCount, eventsPerPush, learnerIds)
  const bodyMb = pushes.map(p => Buffer.byteLength(p.json) / 2 ** 20)
  log(`Push bodies: ${bodyMb.map(n => n.toFixed(2)).join(', ')} MiB`)

  // Warm-up (not measured): the server's code paths and the raw client's, once each.
  const raw = await rawDatabase()
  await push(server, coach.cookie, warmup, 'warm-up push')
  await copyLessons(server.databaseUrl, raw, warmup.body.lessons.map(l => l.id))
  await rawInsert(raw, organisationId, warmup.body.events)
  await timedRequest(server, 'GET', GET_PATH, { cookie: coach.cookie })
  const initial = await snapshotRows(server.databaseUrl)

  // The same GET loops with nothing else running: what the machine gives them today.
  const alone = await getLoop(server, coach.cookie)
  await sleep(GET_ALONE_MS)
  const getAloneMs = await alone.stop()

  // First write, each push beside the raw insert of its rows (the GET loops run during the pushes only).
  const first = []
  const rawMs = []
  const getFirst = []
  const cpuBefore = processCpuSeconds(server.child.pid)
  for (const [i, item] of pushes.entries()) {
    const loop = await getLoop(server, coach.cookie)
    await sleep(20)
    const result = await push(server, coach.cookie, item, `push ${i + 1}`)
    getFirst.push(...await loop.stop())
    first.push(result.ms)
    await copyLessons(server.databaseUrl, raw, item.body.lessons.map(l => l.id))
    rawMs.push(await rawInsert(raw, organisationId, item.body.events))
  }
  const cpuFirst = processCpuSeconds(server.child.pid)
  raw.close()

  const before = await snapshotRows(server.databaseUrl)
  const lessonsExpected = new Set([warmup, ...pushes].flatMap(p => p.body.lessons.map(l => l.id))).size
  const eventsExpected = (1 + pushCount) * eventsPerPush
  if (before.lesson_events !== eventsExpected || before.lessons !== lessonsExpected || before.lesson_scores !== lessonsExpected) {
    throw new Error(`after the first write: ${JSON.stringify(before)}; expected ${eventsExpected} events and ${lessonsExpected} lessons and scores`)
  }

  // Replay: the same bodies again, the same GET loop beside them.
  const replay = []
  const getReplay = []
  for (const [i, item] of pushes.entries()) {
    const loop = await getLoop(server, coach.cookie)
    await sleep(20)
    const result = await push(server, coach.cookie, item, `replay ${i + 1}`)
    getReplay.push(...await loop.stop())
    replay.push(result.ms)
  }
  const cpuReplay = processCpuSeconds(server.child.pid)
  const after = await snapshotRows(server.databaseUrl)
  const { sampledPeak, hwm } = memory.stop()
  const loadAfter = loadAverage()
  await cleanUp()

  const totalEvents = pushCount * eventsPerPush
  const sum = list => list.reduce((a, b) => a + b, 0)
  const perSecond = ms => totalEvents / (sum(ms) / 1000)
  const getAlone = stats(getAloneMs)
  const getDuring = stats(getFirst)
  const getDuringReplay = stats(getReplay)
  const cpuShare = (a, b, ms) => (a === null || b === null ? 'n/a' : ((b - a) / (sum(ms) / 1000)).toFixed(2))

  const figures = {
    sync_events_per_s: round(perSecond(first), 0),
    raw_rows_per_s: round(perSecond(rawMs), 0),
    sync_vs_raw: round(perSecond(first) / perSecond(rawMs), 3),
    replay_vs_first: round(perSecond(replay) / perSecond(first), 3),
    // Rows added, removed or changed in lessons, lesson_events, lesson_scores and change_feed.
    replay_rows_changed: rowsChanged(before, after),
    get_p99_ms_during_sync: round(getDuring.p99, 2),
    peak_rss_mb: round(hwm ?? sampledPeak, 1),
  }

  const ms = list => list.map(n => n.toFixed(0)).join(' / ')
  log('')
  log(table(['measurement', 'events', 'seconds', 'events per s', 'per push ms', 'server CPUs'], [
    ['POST /api/sync, first write', totalEvents, (sum(first) / 1000).toFixed(2), perSecond(first).toFixed(0), ms(first), cpuShare(cpuBefore, cpuFirst, first)],
    ['raw insert, same rows', totalEvents, (sum(rawMs) / 1000).toFixed(2), perSecond(rawMs).toFixed(0), ms(rawMs), '(bench process)'],
    ['POST /api/sync, replay', totalEvents, (sum(replay) / 1000).toFixed(2), perSecond(replay).toFixed(0), ms(replay), cpuShare(cpuFirst, cpuReplay, replay)],
  ]))
  log('')
  log(table([`GET ${GET_PATH} beside`, 'requests', 'p50 ms', 'p95 ms', 'p99 ms', 'max ms'], [
    ['nothing (alone)', getAlone.count, getAlone.p50.toFixed(2), getAlone.p95.toFixed(2), getAlone.p99.toFixed(2), getAlone.max.toFixed(2)],
    ['the first write', getDuring.count, getDuring.p50.toFixed(2), getDuring.p95.toFixed(2), getDuring.p99.toFixed(2), getDuring.max.toFixed(2)],
    ['the replay', getDuringReplay.count, getDuringReplay.p50.toFixed(2), getDuringReplay.p95.toFixed(2), getDuringReplay.p99.toFixed(2), getDuringReplay.max.toFixed(2)],
  ]))
  log('')
  log(table(['rows', 'lessons', 'lesson_events', 'lesson_scores', 'change_feed', 'checksum', 'rows changed since the line above'], [
    ['before the first write', initial.lessons, initial.lesson_events, initial.lesson_scores, initial.change_feed, initial.checksum.slice(0, 16), ''],
    ['before the replay', before.lessons, before.lesson_events, before.lesson_scores, before.change_feed, before.checksum.slice(0, 16), rowsChanged(initial, before)],
    ['after the replay', after.lessons, after.lesson_events, after.lesson_scores, after.change_feed, after.checksum.slice(0, 16), figures.replay_rows_changed],
  ]))
  log('')
  log(`Server memory: peak resident ${figures.peak_rss_mb} MiB (VmHWM), ${sampledPeak.toFixed(1)} MiB the highest ${MEMORY_SAMPLE_MS} ms sample of VmRSS.`)
  const verdict = (ok, text) => `${ok ? 'met    ' : 'MISSED '} ${text}`
  log(verdict(figures.sync_vs_raw >= GOALS.sync_vs_raw, `sync_vs_raw ${figures.sync_vs_raw} (goal ≥ ${GOALS.sync_vs_raw})`))
  log(verdict(figures.replay_vs_first >= GOALS.replay_vs_first, `replay_vs_first ${figures.replay_vs_first} (goal ≥ ${GOALS.replay_vs_first})`))
  log(verdict(figures.replay_rows_changed === 0, `replay_rows_changed ${figures.replay_rows_changed} (must be 0)`))
  log(verdict(figures.get_p99_ms_during_sync <= GOALS.get_p99_ms_during_sync, `get_p99_ms_during_sync ${figures.get_p99_ms_during_sync} ms (goal ≤ ${GOALS.get_p99_ms_during_sync} ms)`))
  if (profileDir) log(`CPU profile of the server: ${profileDir}/ (open in Chrome DevTools → Performance)`)
  log(`Load average at the start ${loadBefore}, at the end ${loadAfter} on ${cpus().length} CPUs. Figures are only comparable from a quiet machine.`)
  log(JSON.stringify(figures))
}

let guard
try {
  await main()
}
catch (error) {
  console.error(`\nsync benchmark failed: ${error?.stack ?? error}`)
  reportServers()
  await cleanUp()
  process.exitCode = 1
}
finally {
  clearTimeout(guard)
  agent.destroy()
}
