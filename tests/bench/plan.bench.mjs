// The plan and records routes under load, each beside a static file in the same run (issue 6).
//
//   npm run bench:plan                    uses the existing .output build (builds it if missing)
//   npm run bench:plan -- --build         rebuilds first (npx nuxt build, under the build lock)
//   ... -- --duration 5                   seconds per measurement (default 10)
//
// An organisation of 500 learners, 40 jobs and about three lessons per learner with their events,
// scores, spot checks and plan items is written straight into a fresh SQLite file
// (lib/plan-seed.mjs), then the built server starts on that file. autocannon sends
// GET /api/plan and GET /api/records as their pages first ask for them (the plan's first page of
// learners with coverage over everyone; the records' first 50, newest first) and GET of a static file (the app's icon, served by
// Nitro with no session and no database), and GET /api/me as the floor of any signed-in route, 20 connections each, one at a time after a warm-up;
// the routes with a signed-in admin's session. Goal: each route's p95 at most 5× the static file's.
// A table is printed for people; the very last line is one JSON object (DESIGN §6).
import { cpus } from 'node:os'
import { performance } from 'node:perf_hooks'
import autocannon from 'autocannon'
import { ensureBuild, snapshotBuild } from './lib/build.mjs'
import { cleanUp, makeTempDir, sleep } from './lib/cleanup.mjs'
import { nextAddress, signIn } from './lib/http.mjs'
import { ADMIN_EMAIL, seedPlanOrganisation } from './lib/plan-seed.mjs'
import { loadAverage, percentile, processCpuSeconds, round, table } from './lib/report.mjs'
import { reportServers, startServer } from './lib/server.mjs'

const CONNECTIONS = 20
const WARMUP_SECONDS = 2
const GOAL_RATIO = 5
const STATIC_PATH = '/fourfold.svg'
const PLAN_PATH = '/api/plan'
const RECORDS_PATH = '/api/records'

const args = process.argv.slice(2)
const forceBuild = args.includes('--build')
const duration = intOption('--duration', 10, 2, 120)

function intOption(name, fallback, min, max) {
  const i = args.indexOf(name)
  if (i === -1) return fallback
  const value = Number(args[i + 1])
  if (!Number.isInteger(value) || value < min || value > max) throw new Error(`${name} takes a whole number from ${min} to ${max}`)
  return value
}

const log = (...parts) => console.log(...parts)

// p95 is not among autocannon's percentiles, so every measured 2xx latency (autocannon's own
// per-request timing, from its 'response' event) is kept and p95 is taken by nearest rank.
async function load(name, server, path, headers) {
  const latencies = []
  const statuses = new Map()
  const cpuBefore = processCpuSeconds(server.child.pid)
  const instance = autocannon({
    url: `${server.url}${path}`,
    method: 'GET',
    connections: CONNECTIONS,
    duration,
    timeout: 60,
    headers,
    warmup: { duration: WARMUP_SECONDS, connections: CONNECTIONS },
    requests: [{
      setupRequest(req) {
        req.headers['x-forwarded-for'] = nextAddress()
        return req
      },
    }],
  })
  instance.on('response', (_client, statusCode, _bytes, responseTime) => {
    statuses.set(statusCode, (statuses.get(statusCode) ?? 0) + 1)
    if (statusCode >= 200 && statusCode < 300 && latencies.length < 5_000_000) latencies.push(responseTime)
  })
  const result = await instance
  const cpuAfter = processCpuSeconds(server.child.pid)
  const bad = [...statuses].filter(([code]) => code < 200 || code >= 300)
  if (result.errors || result.timeouts || bad.length || !latencies.length) {
    throw new Error(`${name}: ${latencies.length} good responses, ${result.errors} errors, ${result.timeouts} timeouts, other statuses ${JSON.stringify(Object.fromEntries(bad))}`)
  }
  latencies.sort((a, b) => a - b)
  log(`  ${name}: ${latencies.length} answers, p95 ${percentile(latencies, 95).toFixed(2)} ms`)
  return {
    name,
    seconds: result.duration,
    count: latencies.length,
    perSecond: latencies.length / result.duration,
    p50: percentile(latencies, 50),
    p95: percentile(latencies, 95),
    p99: percentile(latencies, 99),
    max: latencies.at(-1),
    bytes: result.throughput.total / Math.max(1, result.requests.total),
    serverCpus: cpuBefore === null || cpuAfter === null ? null : (cpuAfter - cpuBefore) / result.duration,
  }
}

/** One request with the session: the route must answer 200 with a body of the expected kind. */
async function check(server, path, cookie, what, test) {
  const res = await fetch(`${server.url}${path}`, { headers: { cookie }, signal: AbortSignal.timeout(60_000) })
  const text = await res.text()
  if (res.status === 404 && path === PLAN_PATH) throw new Error(`${path} answered 404: the plan route is not in this build yet (helper "plan" builds it); build again once it is`)
  if (res.status !== 200) throw new Error(`${what} answered ${res.status}: ${text.slice(0, 1000)}`)
  const body = JSON.parse(text)
  const problem = test(body)
  if (problem) throw new Error(`${what}: ${problem}`)
  return { body, bytes: Buffer.byteLength(text) }
}

/**
 * Requests still queued in the server when a run stops (a slow route under 20 connections) would
 * be answered during the next measurement: wait until a static request answers within 50 ms.
 */
async function settle(server) {
  await sleep(1000)
  for (let i = 0; i < 120; i++) {
    const started = performance.now()
    await fetch(`${server.url}${STATIC_PATH}`, { signal: AbortSignal.timeout(120_000) }).then(r => r.arrayBuffer())
    if (performance.now() - started < 50) return
    await sleep(500)
  }
}

async function main() {
  const build = await ensureBuild({ forceBuild, lock: true, log })
  const entry = await snapshotBuild()
  log(`Build: ${build}; the server runs from a private copy`)
  log(`Machine: ${cpus().length} CPUs, Node ${process.version}; load average ${loadAverage()}`)

  const dir = await makeTempDir('fourfold-bench-plan-')
  const seeding = Date.now()
  const { databaseUrl, counts } = await seedPlanOrganisation(dir)
  log(`Seeded in ${((Date.now() - seeding) / 1000).toFixed(1)} s: ${Object.entries(counts).map(([k, v]) => `${v} ${k}`).join(', ')}`)

  const server = await startServer(entry, 'plan bench', { DATABASE_URL: databaseUrl })
  const cookie = await signIn(server, ADMIN_EMAIL)
  const plan = await check(server, PLAN_PATH, cookie, 'GET /api/plan', b => (Array.isArray(b?.learners) && b.learners.length > 0 && (b.page?.matching ?? b.learners.length) === counts.learners ? '' : `expected ${counts.learners} matching learners, got ${b?.page?.matching ?? b?.learners?.length}`))
  const records = await check(server, RECORDS_PATH, cookie, 'GET /api/records', b => (b?.total === counts.lessons + counts.spotChecks ? '' : `expected total ${counts.lessons + counts.spotChecks}, got ${b?.total}`))
  const asset = await fetch(`${server.url}${STATIC_PATH}`, { signal: AbortSignal.timeout(10_000) })
  await asset.arrayBuffer()
  if (asset.status !== 200) throw new Error(`GET ${STATIC_PATH} answered ${asset.status}`)
  log(`Answers: plan ${(plan.bytes / 1024).toFixed(0)} KiB (first page: ${plan.body.learners.length} of ${plan.body.page?.matching ?? plan.body.learners.length} learners × ${plan.body.jobs?.length} jobs, coverage of all), records page ${(records.bytes / 1024).toFixed(0)} KiB of ${records.body.total}`)
  log(`${duration} s per measurement, ${CONNECTIONS} connections, after a ${WARMUP_SECONDS} s warm-up; one at a time`)

  const rows = []
  rows.push(await load(`GET ${STATIC_PATH} (static)`, server, STATIC_PATH, {}))
  await settle(server)
  // The floor of any signed-in route: unseal the session, one membership read (requireSignedIn).
  rows.push(await load('GET /api/me (session floor)', server, '/api/me', { cookie }))
  await settle(server)
  rows.push(await load(`GET ${PLAN_PATH} (session)`, server, PLAN_PATH, { cookie }))
  await settle(server)
  rows.push(await load(`GET ${RECORDS_PATH} (session)`, server, RECORDS_PATH, { cookie }))
  await settle(server)
  // The static file again at the end: if the two static runs differ much, the machine was busy.
  rows.push(await load(`GET ${STATIC_PATH} (static, again)`, server, STATIC_PATH, {}))

  const head = ['measurement', 'seconds', 'requests', 'per s', 'p50 ms', 'p95 ms', 'p99 ms', 'max ms', 'KiB each', 'server CPUs']
  log('')
  log(table(head, rows.map(r => [r.name, r.seconds.toFixed(1), r.count, r.perSecond.toFixed(1), r.p50.toFixed(2), r.p95.toFixed(2), r.p99.toFixed(2), r.max.toFixed(2), (r.bytes / 1024).toFixed(1), r.serverCpus === null ? 'n/a' : r.serverCpus.toFixed(2)])))
  const [staticRun, meRun, planRun, recordsRun, staticAgain] = rows
  const staticP95 = Math.max(staticRun.p95, staticAgain.p95)
  const planRatio = planRun.p95 / staticP95
  const recordsRatio = recordsRun.p95 / staticP95
  log('')
  log(`static p95 taken as the larger of its two runs (${staticRun.p95.toFixed(2)} / ${staticAgain.p95.toFixed(2)} ms); GET /api/me p95 ${meRun.p95.toFixed(2)} ms = ${(meRun.p95 / staticP95).toFixed(2)}× static`)
  log(`plan p95 ${planRun.p95.toFixed(2)} ms = ${planRatio.toFixed(2)}× static (goal ≤ ${GOAL_RATIO}×: ${planRatio <= GOAL_RATIO ? 'met' : 'missed'})`)
  log(`records p95 ${recordsRun.p95.toFixed(2)} ms = ${recordsRatio.toFixed(2)}× static (goal ≤ ${GOAL_RATIO}×: ${recordsRatio <= GOAL_RATIO ? 'met' : 'missed'})`)
  log(`load average at the end ${loadAverage()}`)
  log(JSON.stringify({ plan_p95_ms: round(planRun.p95, 2), records_p95_ms: round(recordsRun.p95, 2), static_p95_ms: round(staticP95, 2), plan_ratio: round(planRatio, 2), records_ratio: round(recordsRatio, 2) }))
}

try {
  await main()
}
catch (error) {
  console.error(error)
  reportServers()
  process.exitCode = 1
}
finally {
  await cleanUp()
}
