// Many tablets syncing at once while others read the plan and the records, against the built
// server — first one process, then two processes on the same SQLite file (issue 7, item 1).
//
//   npm run bench:load                    uses the existing .output build (builds it under the build lock if missing)
//   npm run bench:load -- --build         rebuilds first (npx nuxt build, under the build lock)
//   ... -- --tablets 50 --readers 20      simulated tablets (2–200) and reading connections (0–100)
//   ... -- --duration 60 --events 300     measured seconds per run (5–600) and events per push (10–5000)
//   ... -- --only two                     one of the runs (one | two), to look into it; the other's keys are null
//   ... -- --output DIR                   runs another build's output folder instead (to compare two builds)
//   ... -- --server-logs DIR              writes the end of each server's output (20 kB) to DIR, kept after the run
//   ... -- --cpu-prof                     the measured servers write V8 CPU profiles to a folder in the temp folder (kept)
//
// Each tablet is its own coach, signed in through an invitation read from the captured mail. It
// builds a push of a few lessons' events (lib/sync-records.mjs: presentations, try-outs T1–T4,
// step order, undos, sign-offs), sends POST /api/sync, waits for the answer and repeats, keeping a
// ledger of every id each answer acknowledged (lib/load-tablets.mjs, worker threads). A failed push
// is sent again after the answer's Retry-After (or 1 s), as the app's outbox does. Beside them,
// autocannon keeps `--readers` connections on GET /api/plan and GET /api/records. After the
// deadline no new request starts; every push in flight gets its answer, then the servers stop and
// the database file is compared with the ledger (lib/load-verify.mjs): nothing acknowledged may be
// missing, nothing stored twice or different from what was sent, nothing unacknowledged stored
// beyond a push that never got an answer. Then the same again with two server processes sharing
// one database file (DESIGN.md §5), the tablets and readers split between them; a 5xx or an error
// that mentions a busy or locked database there counts in two_process_errors.
// Traffic goes to 127.0.0.1 only. A table is printed for people; the very last line is one JSON
// object (DESIGN §6).
import { randomBytes } from 'node:crypto'
import { existsSync, mkdirSync, writeFileSync } from 'node:fs'
import { copyFile } from 'node:fs/promises'
import { cpus, tmpdir } from 'node:os'
import { join, resolve } from 'node:path'
import autocannon from 'autocannon'
import { createClient } from '@libsql/client'
import { buildLockHeld, ensureBuild, snapshotBuild } from './lib/build.mjs'
import { cleanUp, makeTempDir, sleep, stopChild, trackWorker } from './lib/cleanup.mjs'
import { addLearners, addMember, expectJson, publishBreakdown, request, signIn, signUp } from './lib/http.mjs'
import { mentionsBusy, runTablets } from './lib/load-tablets.mjs'
import { verifyDatabase } from './lib/load-verify.mjs'
import { loadAverage, percentile, processCpuSeconds, processMemoryMb, round, table } from './lib/report.mjs'
import { reportServers, startServer } from './lib/server.mjs'
import { breakdownContent } from './lib/sync-records.mjs'

const READ_PATHS = ['/api/plan', '/api/records']
const WARMUP_MS = 3000 // requests started before this are not in the figures (their ids are verified)
const REQUEST_TIMEOUT_MS = 30_000
const GRACE_MS = 30_000 // after the deadline, how long a failing push is still retried
const RUN_TIMEOUT_MS = 20 * 60_000
const LEARNERS = ['Ilse Brannagh', 'Tomasz Weller', 'Ama Osei', 'Joris Vaak', 'Lena Stroud', 'Kofi Mensah', 'Rosa Lindqvist', 'Emeka Obi', 'Hanne Duval', 'Piotr Zaleski', 'Aiko Brandt', 'Sven Calloway', 'Noor Haddad', 'Bram Oosting', 'Greta Moll', 'Dario Fenn', 'Mina Castell', 'Oskar Rue', 'Talia Berg', 'Juno Akers']

const args = process.argv.slice(2)
const forceBuild = args.includes('--build')
const tabletCount = intOption('--tablets', 50, 2, 200)
const readerCount = intOption('--readers', 20, 0, 100)
const durationS = intOption('--duration', 60, 5, 600)
const eventsPerPush = intOption('--events', 300, 10, 5000)
const only = args.includes('--only') ? args[args.indexOf('--only') + 1] : null
if (only !== null && only !== 'one' && only !== 'two') throw new Error('--only takes one or two')
const otherOutput = stringOption('--output')
const serverLogs = args.includes('--server-logs') ? resolve(args[args.indexOf('--server-logs') + 1] ?? '.') : null
if (serverLogs) mkdirSync(serverLogs, { recursive: true })
// Kept after the run (outside the checkout), for Chrome DevTools.
const profileDir = args.includes('--cpu-prof') ? join(tmpdir(), `fourfold-load-profile-${Date.now()}`) : null
if (profileDir) mkdirSync(profileDir, { recursive: true })
const measured = profileDir ? { nodeArgs: ['--cpu-prof', `--cpu-prof-dir=${profileDir}`] } : {}

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

// ---- readers: autocannon on the plan and the records ---------------------------------------

/**
 * `connections` autocannon connections on GET `path` from `startAt` for the warm-up and the
 * measured window; latencies of the requests started in the window, answers completed in it, and
 * every answer that was not 2xx, error and timeout.
 */
async function readLoad({ server, path, cookie, connections, startAt, durationMs }) {
  const measureFrom = startAt + WARMUP_MS
  const deadline = measureFrom + durationMs
  await sleep(Math.max(0, startAt - Date.now()))
  const latencies = []
  const statuses = new Map()
  let completedInWindow = 0
  const errors = []
  const instance = autocannon({
    url: `${server.url}${path}`,
    connections,
    duration: Math.ceil((WARMUP_MS + durationMs) / 1000),
    timeout: REQUEST_TIMEOUT_MS / 1000,
    headers: { 'cookie': cookie, 'x-forwarded-for': '198.18.2.1' },
  })
  instance.on('response', (_client, statusCode, _bytes, responseTime) => {
    const now = Date.now()
    const started = now - responseTime
    if (now >= measureFrom && now < deadline) completedInWindow++
    if (started < measureFrom || started >= deadline) return
    latencies.push(responseTime)
    statuses.set(statusCode, (statuses.get(statusCode) ?? 0) + 1)
  })
  instance.on('reqError', (_client, error) => {
    if (errors.length < 20) errors.push(String(error?.message ?? error))
  })
  const result = await instance
  const failures = [...statuses].filter(([code]) => code < 200 || code >= 300).map(([status, count]) => ({ server: server.label, status, count }))
  return { server: server.label, path, latencies, completedInWindow, failures, errors: result.errors, timeouts: result.timeouts, errorTexts: errors }
}

// ---- the runs ------------------------------------------------------------------------------

/**
 * One run: tablets and readers against `servers` (tablets and readers dealt out in turn), then the
 * servers stopped and the file checked. Returns the figures and the verification.
 */
async function loadRun(name, servers, databaseUrl, world) {
  const startAt = Date.now() + 1500 // every worker and autocannon online first
  const durationMs = durationS * 1000
  const tablets = world.coaches.map((coach, i) => {
    const server = servers[i % servers.length]
    return { label: server.label, url: server.url, cookie: coach.cookie, ids: { coachUserId: coach.userId, jobId: world.jobId, versionId: world.versionId }, learnerIds: world.learnerIds, seed: 0x10AD0000 + i }
  })
  const readers = []
  for (let i = 0; i < readerCount; i++) {
    const server = servers[i % servers.length]
    const path = READ_PATHS[Math.floor(i / servers.length) % READ_PATHS.length]
    const group = readers.find(r => r.server === server && r.path === path)
    if (group) group.connections++
    else readers.push({ server, path, connections: 1 })
  }
  const cpuBefore = servers.map(s => processCpuSeconds(s.child.pid))
  log(`\n${name}: ${tablets.length} tablets (${eventsPerPush} events per push) and ${readerCount} reading connections (${readers.map(r => `${r.connections} × ${r.path} on ${r.server.label}`).join(', ')}), ${WARMUP_MS / 1000} s warm-up + ${durationS} s; load average ${loadAverage()}`)
  const [tabletResult, ...readResults] = await Promise.all([
    runTablets({ tablets, content: world.content, eventsPerPush, startAt, warmupMs: WARMUP_MS, durationMs, timeoutMs: REQUEST_TIMEOUT_MS, graceMs: GRACE_MS, threads: 2, track: trackWorker }),
    ...readers.map(r => readLoad({ server: r.server, path: r.path, cookie: world.readerCookie, connections: r.connections, startAt, durationMs })),
  ])
  const cpuAfter = servers.map(s => processCpuSeconds(s.child.pid))
  const memory = servers.map(s => processMemoryMb(s.child.pid))
  // Every push has its answer now (or was given up): stop the servers, then read the file.
  for (const server of servers) await stopChild(server.child)
  const verification = await verifyDatabase(databaseUrl, tabletResult.ledger, world.organisationId)
  return { name, servers, durationMs, tablets: tabletResult, readers: readResults, verification, memory, serverCpus: cpuBefore.map((c, i) => (c === null || cpuAfter[i] === null ? null : (cpuAfter[i] - c) / ((durationMs + WARMUP_MS) / 1000))) }
}

/** Figures of one run: all requests together and per kind. */
function figuresOf(run) {
  const stats = (list) => {
    const sorted = [...list].sort((a, b) => a - b)
    return { count: sorted.length, p50: percentile(sorted, 50), p95: percentile(sorted, 95), p99: percentile(sorted, 99), max: sorted.at(-1) ?? Number.NaN }
  }
  const seconds = run.durationMs / 1000
  const t = run.tablets
  const syncFailures = t.failures.filter(f => f.measured)
  const readFailures = run.readers.flatMap(r => r.failures)
  const readErrors = run.readers.reduce((n, r) => n + r.errors, 0)
  const rows = [
    { what: 'POST /api/sync', ...stats(t.latencies), perSecond: t.completedInWindow / seconds, failed: syncFailures.length },
    ...READ_PATHS.map((path) => {
      const mine = run.readers.filter(r => r.path === path)
      return { what: `GET ${path}`, ...stats(mine.flatMap(r => r.latencies)), perSecond: mine.reduce((n, r) => n + r.completedInWindow, 0) / seconds, failed: mine.reduce((n, r) => n + r.errors + r.failures.reduce((m, f) => m + f.count, 0), 0) }
    }),
  ]
  const all = stats([...t.latencies, ...run.readers.flatMap(r => r.latencies)])
  const errors = syncFailures.length + readFailures.reduce((n, f) => n + f.count, 0) + readErrors
  const busy = t.failures.filter(f => (f.status ?? 0) >= 500 || mentionsBusy(f)).length
    + readFailures.filter(f => f.status >= 500).reduce((n, f) => n + f.count, 0)
    + run.readers.reduce((n, r) => n + r.errorTexts.filter(text => /busy|locked/i.test(text)).length, 0)
  return { rows, all: { ...all, perSecond: rows.reduce((n, r) => n + r.perSecond, 0), errors }, busy }
}

// ---- main ----------------------------------------------------------------------------------

async function main() {
  const lockHeld = buildLockHeld()
  const build = otherOutput ? `${otherOutput} (--output)` : await ensureBuild({ forceBuild, lock: true, log })
  const entry = otherOutput ? await snapshotBuild({ from: otherOutput }) : await snapshotBuild({ lock: true })
  log(`Build: ${build}; the servers run from a private copy`)
  guard = setTimeout(() => {
    console.error(`\nload benchmark: still running after ${RUN_TIMEOUT_MS / 60_000} minutes; stopping`)
    cleanUp().finally(() => process.exit(1))
  }, RUN_TIMEOUT_MS)
  const loadBefore = loadAverage()
  log(`Machine: ${cpus().length} CPUs, Node ${process.version}; load average ${loadBefore}${lockHeld ? '; build lock held for the whole run' : ''}`)

  // One organisation set up once through the API, then copied, so both runs start from the same
  // file; every server has the same session password, so the sessions hold on all of them.
  const sessionPassword = randomBytes(32).toString('hex')
  const setup = await startServer(entry, 'setup', { NUXT_SESSION_PASSWORD: sessionPassword })
  const stamp = Date.now().toString(36)
  const admin = await signUp(setup, `admin-${stamp}@bench.example`, { organisation: 'Harbour Bakery (load bench)' })
  const adminCookie = await signIn(setup, `admin-${stamp}@bench.example`)
  const content = breakdownContent()
  const { jobId, versionId } = await publishBreakdown(setup, adminCookie, adminCookie, content)
  const learnerIds = await addLearners(setup, adminCookie, LEARNERS)
  const coaches = []
  const invitesStarted = Date.now()
  // A few at a time: accepting an invitation hashes a password (scrypt, CPU-bound).
  for (let i = 0; i < tabletCount; i += 4) {
    coaches.push(...await Promise.all(Array.from({ length: Math.min(4, tabletCount - i) }, (_, k) => addMember(setup, adminCookie, `coach-${i + k}-${stamp}@bench.example`, 'coach', `Bench Coach ${i + k + 1}`))))
  }
  const readerCookie = await signIn(setup, `admin-${stamp}@bench.example`)
  for (const path of READ_PATHS) await expectJson(await request(setup, 'GET', path, undefined, { cookie: readerCookie }), 200, `GET ${path}`)
  log(`Set up: 1 admin, ${coaches.length} coaches invited and signed in through the captured mail (${((Date.now() - invitesStarted) / 1000).toFixed(1)} s), ${learnerIds.length} learners, 1 published breakdown`)
  await stopChild(setup.child)
  const template = join(setup.dir, 'fourfold.db')
  const client = createClient({ url: `file:${template}`, concurrency: 1 })
  await client.execute('PRAGMA wal_checkpoint(TRUNCATE)')
  client.close()
  const copyOf = async (label) => {
    const dir = await makeTempDir(`fourfold-bench-load-${label}-`)
    await copyFile(template, join(dir, 'fourfold.db'))
    return `file:${join(dir, 'fourfold.db')}`
  }
  const world = { organisationId: admin.organisation.id, content, jobId, versionId, learnerIds, coaches, readerCookie }

  let one = null
  let two = null
  if (only !== 'two') {
    const oneUrl = await copyOf('one')
    one = await loadRun('One process', [await startServer(entry, 'one', { DATABASE_URL: oneUrl, NUXT_SESSION_PASSWORD: sessionPassword }, measured)], oneUrl, world)
  }
  if (only !== 'one') {
    const twoUrl = await copyOf('two')
    // Started one after the other, so the second finds the migrations applied.
    const a = await startServer(entry, 'A', { DATABASE_URL: twoUrl, NUXT_SESSION_PASSWORD: sessionPassword }, measured)
    const b = await startServer(entry, 'B', { DATABASE_URL: twoUrl, NUXT_SESSION_PASSWORD: sessionPassword }, measured)
    two = await loadRun('Two processes, one file', [a, b], twoUrl, world)
  }
  const loadAfter = loadAverage()
  report(one, two, loadBefore, loadAfter)
}

function report(one, two, loadBefore, loadAfter) {
  const f1 = one && figuresOf(one)
  const f2 = two && figuresOf(two)
  const ms = n => (Number.isFinite(n) ? n.toFixed(1) : 'n/a')
  for (const [run, f] of [[one, f1], [two, f2]]) {
    if (!run) continue
    log('')
    log(`${run.name} (${run.durationMs / 1000} s measured; server CPUs ${run.serverCpus.map(c => (c === null ? 'n/a' : c.toFixed(2))).join(' + ')}; peak resident ${run.memory.map(m => (m.hwm === null ? 'n/a' : `${m.hwm.toFixed(0)} MiB`)).join(' + ')})`)
    log(table(['requests', 'count', 'per s', 'p50 ms', 'p95 ms', 'p99 ms', 'max ms', 'failed'], [
      ...f.rows.map(r => [r.what, r.count, r.perSecond.toFixed(1), ms(r.p50), ms(r.p95), ms(r.p99), ms(r.max), r.failed]),
      ['all', f.all.count, f.all.perSecond.toFixed(1), ms(f.all.p50), ms(f.all.p95), ms(f.all.p99), ms(f.all.max), f.all.errors],
    ]))
    const t = run.tablets
    const v = run.verification
    log(`Pushes: ${t.pushesSent} sent, ${t.pushesSettled} answered 2xx, ${t.retries} sent again after a failure, ${t.pushesGivenUp} left without an answer; items rejected ${t.rejectedCount}, not in the answer ${t.unanswered}, acknowledged but not sent ${t.ackedUnknown}`)
    log(table(['in the database file', 'rows', 'acknowledged', 'lost', 'duplicate ids', 'differing', 'extra: no answer', 'extra: unexplained', 'never sent', 'other org', 'score ≠ events'], [
      ['lesson_events', v.events.rows, v.events.acknowledged, v.events.lost, v.events.duplicates, v.events.differing, v.events.extraExplained, v.events.extraUnexplained, v.events.strangers, v.events.otherOrganisation, ''],
      ['lessons', v.lessons.rows, v.lessons.acknowledged, v.lessons.lost, v.lessons.duplicates, v.lessons.differing, v.lessons.extraExplained, v.lessons.extraUnexplained, v.lessons.strangers, v.lessons.otherOrganisation, v.lessons.scoreMismatch],
    ]))
    const failures = [...t.failures.map(x => ({ ...x, text: x.text.replace(/\s+/g, ' ').slice(0, 200) })), ...run.readers.flatMap(r => [...r.failures, ...r.errorTexts.map(error => ({ server: r.server, error }))])]
    if (failures.length) log(`Failures (first 5 of ${failures.length}):\n  ${failures.slice(0, 5).map(x => JSON.stringify(x)).join('\n  ')}`)
    if (t.rejected.length) log(`Rejected (first 5):\n  ${t.rejected.slice(0, 5).map(x => JSON.stringify(x)).join('\n  ')}`)
    for (const server of run.servers) {
      if (serverLogs) writeFileSync(join(serverLogs, `${run.name.startsWith('One') ? 'one' : 'two'}-${server.label}.log`), server.output())
      const lines = server.output().split('\n').filter(line => /busy|locked|SQLITE_|error/i.test(line))
      if (lines.length) log(`Server ${server.label}'s output about errors (last 5 of ${lines.length} kept):\n  ${lines.slice(-5).map(line => line.slice(0, 300)).join('\n  ')}`)
    }
  }
  const pick = (f, key, digits) => (f ? round(f.all[key], digits) : null)
  const figures = {
    requests_per_s: pick(f1, 'perSecond', 1),
    p95_ms: pick(f1, 'p95', 1),
    p99_ms: pick(f1, 'p99', 1),
    errors: f1 ? f1.all.errors : null,
    lost: one ? one.verification.lost : null,
    doubled: one ? one.verification.doubled : null,
    two_process_errors: f2 ? f2.busy : null,
    two_process_requests_per_s: pick(f2, 'perSecond', 1),
    two_process_p95_ms: pick(f2, 'p95', 1),
    two_process_p99_ms: pick(f2, 'p99', 1),
    two_process_lost: two ? two.verification.lost : null,
    two_process_doubled: two ? two.verification.doubled : null,
    unexplained_rows: [one, two].reduce((n, run) => n + (run ? run.verification.unexplained : 0), 0),
    events_per_s: one ? round(one.verification.events.acknowledged / ((one.durationMs + WARMUP_MS) / 1000), 0) : null,
    two_process_events_per_s: two ? round(two.verification.events.acknowledged / ((two.durationMs + WARMUP_MS) / 1000), 0) : null,
    peak_rss_mb: round(Math.max(...[one, two].flatMap(run => (run ? run.memory : [])).map(m => m.hwm ?? 0)), 1),
  }
  log('')
  const verdict = (ok, text) => `${ok ? 'met    ' : 'MISSED '} ${text}`
  if (one) log(verdict(figures.errors === 0, `errors ${figures.errors} in the one-process run (must be 0)`))
  log(verdict(!figures.lost && !figures.two_process_lost, `lost ${figures.lost} / ${figures.two_process_lost} (one / two processes; must be 0)`))
  log(verdict(!figures.doubled && !figures.two_process_doubled, `doubled ${figures.doubled} / ${figures.two_process_doubled} (must be 0)`))
  log(verdict(figures.unexplained_rows === 0, `rows the servers did not acknowledge and no unanswered push explains: ${figures.unexplained_rows} (must be 0)`))
  if (two) log(verdict(figures.two_process_errors === 0, `two_process_errors ${figures.two_process_errors} (5xx or busy/locked errors with two processes; goal 0)`))
  if (profileDir) log(`CPU profiles of the servers: ${profileDir}/ (open in Chrome DevTools → Performance)`)
  log(`Load average at the start ${loadBefore}, at the end ${loadAfter} on ${cpus().length} CPUs. Figures are only comparable from a quiet machine.`)
  log(JSON.stringify(figures))
}

let guard
try {
  await main()
}
catch (error) {
  console.error(`\nload benchmark failed: ${error?.stack ?? error}`)
  reportServers()
  process.exitCode = 1
}
finally {
  clearTimeout(guard)
  await cleanUp()
}
