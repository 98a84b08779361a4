// Sign-in cost and authorised-request latency, measured against the built server.
//
//   npm run bench:auth            uses the existing .output build (builds it if missing)
//   npm run bench:auth -- --build rebuilds first (npx nuxt build)
//   ... -- --duration 5           seconds per measurement (1–60, default 10)
//
// In one run it starts two instances of the built server side by side: one with the
// project's password-hash settings (scrypt N = 2^17, the build's default) and one with
// nuxt-auth-utils' own defaults (N = 2^14, set through runtime config env). It measures
// correct-password sign-ins per second on each, then the p95 latency of GET /api/me
// with a session beside a static file under the same load. Traffic goes to 127.0.0.1
// only. A table is printed for people; the very last line is one JSON object (DESIGN §6).
import { cpus } from 'node:os'
import { createClient } from '@libsql/client'
import autocannon from 'autocannon'
import { ensureBuild, snapshotBuild } from './lib/build.mjs'
import { cleanUp, sleep } from './lib/cleanup.mjs'
import { PASSWORD, nextAddress, signIn, signUp } from './lib/http.mjs'
import { loadAverage, percentile, processCpuSeconds, round, table } from './lib/report.mjs'
import { reportServers, startServer } from './lib/server.mjs'

let snapshotEntry // the private copy of the build the servers run from

const SIGNIN_CONNECTIONS = 4 // libuv's default threadpool size: scrypt runs there
const GET_CONNECTIONS = 20
const WARMUP_SECONDS = 2
const STATIC_PATH = '/fourfold.svg'

// The project's choice is the build's default (server/utils/password-settings.ts);
// the other server gets @adonisjs/hash's scrypt defaults, which nuxt-auth-utils uses.
const CHOSEN_COST = 131072
const DEFAULT_COST = 16384
const DEFAULT_HASH_ENV = { NUXT_HASH_SCRYPT_COST: String(DEFAULT_COST), NUXT_HASH_SCRYPT_MAX_MEMORY: String(32 * 1024 * 1024) }

const args = process.argv.slice(2)
const forceBuild = args.includes('--build')
const duration = parseDuration(args)

function parseDuration(list) {
  const i = list.indexOf('--duration')
  if (i === -1) return 10
  const value = Number(list[i + 1])
  if (!Number.isInteger(value) || value < 1 || value > 60) throw new Error('--duration takes whole seconds from 1 to 60')
  return value
}

const log = (...parts) => console.log(...parts)

/** The PHC string the server stored, read straight from its SQLite file. */
async function storedHash(server, email) {
  const db = createClient({ url: server.databaseUrl })
  try {
    const { rows } = await db.execute({ sql: 'select password_hash from users where email = ?', args: [email] })
    if (rows.length !== 1) throw new Error(`${server.label}: expected one user row for ${email}, found ${rows.length}`)
    return String(rows[0].password_hash)
  }
  finally {
    db.close()
  }
}

async function expectCost(server, email, cost) {
  const hash = await storedHash(server, email)
  const prefix = `$scrypt$n=${cost},r=8,p=1$`
  if (!hash.startsWith(prefix)) {
    throw new Error(`${server.label}: stored hash starts ${JSON.stringify(hash.slice(0, 28))}, expected ${JSON.stringify(prefix)}`
      + (cost === DEFAULT_COST ? ' — the NUXT_HASH_SCRYPT_* override did not take effect' : ' — the build does not carry the project\'s settings (stale build? try --build)'))
  }
  return hash.split('$').slice(0, 3).join('$')
}

// ---- load --------------------------------------------------------------------------------

// p95 is not among autocannon's percentiles (it reports p50, p90, p97.5, p99 …), so every
// measured 2xx response's latency (autocannon's own per-request timing, in fractional ms,
// from its 'response' event) is kept and p95 is taken exactly by the nearest-rank method on
// the sorted list. Warm-up responses go to a separate tracker and are not counted. The list
// is bounded by the run's duration. The value is checked against autocannon's p90 and
// p97.5 (whole milliseconds, from its HDR histogram) as a sanity test (percentile() in lib/report.mjs).
const serverCpuSeconds = server => processCpuSeconds(server.child.pid)

async function load(name, server, options) {
  const latencies = []
  const statuses = new Map()
  const cpuBefore = serverCpuSeconds(server)
  const instance = autocannon({
    duration,
    timeout: 60,
    ...options,
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
  const cpuAfter = serverCpuSeconds(server)
  const bad = [...statuses].filter(([code]) => code < 200 || code >= 300)
  if (result.errors || result.timeouts || bad.length || !latencies.length) {
    throw new Error(`${name}: ${latencies.length} good responses, ${result.errors} errors, ${result.timeouts} timeouts, other statuses ${JSON.stringify(Object.fromEntries(bad))}`)
  }
  latencies.sort((a, b) => a - b)
  const p95 = percentile(latencies, 95)
  const { p90, p97_5: p975 } = result.latency
  if (p95 < p90 - 1 || p95 > p975 + 1) console.warn(`warning: ${name}: p95 ${p95.toFixed(2)} ms lies outside autocannon's p90 ${p90} … p97.5 ${p975} ms`)
  return {
    name,
    connections: options.connections,
    seconds: result.duration,
    count: latencies.length,
    perSecond: latencies.length / result.duration,
    p50: percentile(latencies, 50),
    p95,
    p99: percentile(latencies, 99),
    max: latencies[latencies.length - 1],
    // Of the machine's CPUs, how many the server kept busy on average.
    serverCpus: cpuBefore === null || cpuAfter === null ? null : (cpuAfter - cpuBefore) / result.duration,
  }
}

// No autocannon warm-up here: its connections are dropped with hashes still running on the
// server, which would then compete with the measured run. A few complete sign-ins instead.
async function signInLoad(server, email) {
  for (let round = 0; round < 2; round++) {
    await Promise.all(Array.from({ length: SIGNIN_CONNECTIONS }, () => signIn(server, email)))
  }
  return load(`sign-in, ${server.label}`, server, {
    url: `${server.url}/api/auth/login`,
    method: 'POST',
    connections: SIGNIN_CONNECTIONS,
    headers: { 'content-type': 'application/json' },
    body: JSON.stringify({ email, password: PASSWORD }),
  })
}

function getLoad(name, server, path, headers = {}) {
  return load(name, server, {
    url: `${server.url}${path}`,
    method: 'GET',
    connections: GET_CONNECTIONS,
    headers,
    warmup: { duration: WARMUP_SECONDS, connections: GET_CONNECTIONS },
  })
}

// Requests still in flight when a run stops keep the server's threads busy for a while
// (a sign-in hash with N = 2^17 takes a good fraction of a second): let them finish.
async function settle(previous) {
  await sleep(Math.min(15_000, Math.max(1000, 3 * previous.max)))
}

// ---- report --------------------------------------------------------------------------------

function loadTable(rows) {
  const head = ['measurement', 'conns', 'seconds', 'requests', 'per s', 'p50 ms', 'p95 ms', 'p99 ms', 'max ms', 'server CPUs']
  return table(head, rows.map(r => [r.name, r.connections, r.seconds.toFixed(1), r.count, r.perSecond.toFixed(1), r.p50.toFixed(2), r.p95.toFixed(2), r.p99.toFixed(2), r.max.toFixed(2), r.serverCpus === null ? 'n/a' : r.serverCpus.toFixed(2)]))
}

// ---- main --------------------------------------------------------------------------------

async function main() {
  const build = await ensureBuild({ forceBuild, log })
  snapshotEntry = await snapshotBuild()
  log(`Build: ${build}; servers run from a private copy`)
  log(`Machine: ${cpus().length} CPUs, Node ${process.version}, UV_THREADPOOL_SIZE ${process.env.UV_THREADPOOL_SIZE ?? '4 (default)'}; load average ${loadAverage()}`)
  log(`${duration} s per measurement; GETs after a ${WARMUP_SECONDS} s warm-up, sign-ins after ${2 * SIGNIN_CONNECTIONS} warm-up sign-ins`)

  const [chosen, fallback] = await Promise.all([
    startServer(snapshotEntry, 'project N=2^17', {}),
    startServer(snapshotEntry, 'nuxt-auth-utils default N=2^14', DEFAULT_HASH_ENV),
  ])
  const email = 'bench@fourfold.example'
  await Promise.all([signUp(chosen, email), signUp(fallback, email)])
  const chosenPrefix = await expectCost(chosen, email, CHOSEN_COST)
  const fallbackPrefix = await expectCost(fallback, email, DEFAULT_COST)
  log(`Stored hashes: ${chosen.label} → ${chosenPrefix}; ${fallback.label} → ${fallbackPrefix}`)

  const cookie = await signIn(chosen, email)
  await signIn(fallback, email)
  const me = await fetch(`${chosen.url}/api/me`, { headers: { cookie }, signal: AbortSignal.timeout(10_000) })
  const meBody = await me.json().catch(() => ({}))
  if (me.status !== 200 || meBody?.user?.email !== email) throw new Error(`GET /api/me with the session answered ${me.status}: ${JSON.stringify(meBody)}`)
  const asset = await fetch(`${chosen.url}${STATIC_PATH}`, { signal: AbortSignal.timeout(10_000) })
  await asset.arrayBuffer()
  if (asset.status !== 200) throw new Error(`GET ${STATIC_PATH} answered ${asset.status}`)

  // One measurement at a time, so the two servers never compete for the CPUs.
  log('Measuring …')
  const rows = []
  rows.push(await signInLoad(chosen, email))
  await settle(rows.at(-1))
  rows.push(await signInLoad(fallback, email))
  await settle(rows.at(-1))
  rows.push(await getLoad(`GET /api/me (session), ${chosen.label}`, chosen, '/api/me', { cookie }))
  await settle(rows.at(-1))
  rows.push(await getLoad(`GET ${STATIC_PATH} (static), ${chosen.label}`, chosen, STATIC_PATH))

  // A correct sign-in re-hashes when settings differ from the stored hash; they must not have.
  await expectCost(chosen, email, CHOSEN_COST)
  await expectCost(fallback, email, DEFAULT_COST)

  const loadAfter = loadAverage()
  await cleanUp()

  const [signinChosen, signinDefault, get, statik] = rows
  const figures = {
    signin_per_s: round(signinChosen.perSecond, 2),
    signin_default_per_s: round(signinDefault.perSecond, 2),
    get_p95_ms: round(get.p95, 2),
    static_p95_ms: round(statik.p95, 2),
    // How many times more sign-ins per second the library default allows.
    signin_ratio: round(signinDefault.perSecond / signinChosen.perSecond, 2),
  }
  log('')
  log(loadTable(rows))
  log('')
  log(`Sign-ins per second: ${figures.signin_per_s} with the project's N=2^17 vs ${figures.signin_default_per_s} with the default N=2^14 (${figures.signin_ratio}× as many with the default).`)
  log(`p95 under ${GET_CONNECTIONS} connections: GET /api/me ${figures.get_p95_ms} ms vs static ${STATIC_PATH} ${figures.static_p95_ms} ms.`)
  log(`Load average at the end: ${loadAfter} on ${cpus().length} CPUs. Figures are only comparable from a quiet machine;`)
  log('"server CPUs" well below the CPU count during sign-ins means something else had the CPUs.')
  log(JSON.stringify(figures))
}

try {
  await main()
}
catch (error) {
  console.error(`\nauth benchmark failed: ${error?.stack ?? error}`)
  reportServers()
  await cleanUp()
  process.exitCode = 1
}
