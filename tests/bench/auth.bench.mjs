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
import { execFileSync, spawn } from 'node:child_process'
import { randomBytes } from 'node:crypto'
import { existsSync, readFileSync, rmSync, statSync } from 'node:fs'
import { cp, mkdtemp, rm } from 'node:fs/promises'
import { createServer } from 'node:net'
import { cpus, loadavg, tmpdir } from 'node:os'
import { dirname, join, resolve } from 'node:path'
import { fileURLToPath } from 'node:url'
import { createClient } from '@libsql/client'
import autocannon from 'autocannon'

const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..')
const serverEntry = join(root, '.output/server/index.mjs')
let snapshotEntry // the private copy of the build the servers run from

const SIGNIN_CONNECTIONS = 4 // libuv's default threadpool size: scrypt runs there
const GET_CONNECTIONS = 20
const WARMUP_SECONDS = 2
const HEALTH_TIMEOUT_MS = 60_000
const BUILD_TIMEOUT_MS = 15 * 60_000
const STATIC_PATH = '/fourfold.svg'
const PASSWORD = 'correct horse battery staple'

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

const sleep = ms => new Promise(r => setTimeout(r, ms))
const log = (...parts) => console.log(...parts)

// ---- clean-up, also on error and Ctrl-C --------------------------------------------

const children = new Set()
const servers = []
const tempDirs = new Set()

async function cleanUp() {
  await Promise.all([...children].map(stopChild))
  await Promise.all([...tempDirs].map(async (dir) => {
    await rm(dir, { recursive: true, force: true })
    tempDirs.delete(dir)
  }))
}

async function stopChild(child) {
  if (child.exitCode === null && child.signalCode === null) {
    const exited = new Promise(r => child.once('exit', r))
    child.kill('SIGTERM')
    await Promise.race([exited, sleep(5000)])
    if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL')
  }
  children.delete(child)
}

// Last resort if the process ends some other way: synchronous, best effort.
process.on('exit', () => {
  for (const child of children) child.kill('SIGKILL')
  for (const dir of tempDirs) rmSync(dir, { recursive: true, force: true })
})
for (const signal of ['SIGINT', 'SIGTERM']) {
  process.once(signal, () => {
    console.error(`\n${signal}: stopping servers`)
    cleanUp().finally(() => process.exit(130))
  })
}

// ---- build ----------------------------------------------------------------------------

async function ensureBuild() {
  if (existsSync(serverEntry) && !forceBuild) {
    return `existing .output (built ${statSync(serverEntry).mtime.toISOString()}; pass --build to rebuild)`
  }
  const reason = forceBuild ? '--build given' : '.output/server/index.mjs missing'
  log(`Building (${reason}): npx nuxt build …`)
  const started = Date.now()
  // Build output goes to stderr so stdout stays the report.
  const child = spawn('npx', ['nuxt', 'build'], { cwd: root, stdio: ['ignore', process.stderr, process.stderr] })
  children.add(child)
  const timer = setTimeout(() => child.kill('SIGTERM'), BUILD_TIMEOUT_MS)
  const code = await new Promise(r => child.once('exit', (c, s) => r(c ?? s)))
  clearTimeout(timer)
  children.delete(child)
  if (code !== 0) throw new Error(`npx nuxt build failed (${code})`)
  if (!existsSync(serverEntry)) throw new Error('build finished but .output/server/index.mjs is missing')
  return `fresh build (${reason}), ${Math.round((Date.now() - started) / 1000)} s`
}

// Others may rebuild .output in the shared tree while this runs, which would pull files out
// from under a running server; so both servers run from a private copy (it is small).
async function snapshotBuild() {
  const dir = await mkdtemp(join(tmpdir(), 'fourfold-bench-build-'))
  tempDirs.add(dir)
  await cp(join(root, '.output'), join(dir, 'output'), { recursive: true })
  snapshotEntry = join(dir, 'output/server/index.mjs')
  if (!existsSync(snapshotEntry) || !existsSync(join(dir, 'output/nitro.json'))) {
    throw new Error('the copy of .output is incomplete (was it being rebuilt?); run again, or with --build')
  }
}

// ---- servers ----------------------------------------------------------------------------

async function freePort() {
  return new Promise((resolvePort, reject) => {
    const srv = createServer()
    srv.once('error', reject)
    srv.listen(0, '127.0.0.1', () => {
      const address = srv.address()
      srv.close(() => resolvePort(address.port))
    })
  })
}

async function startServer(label, extraEnv) {
  const dir = await mkdtemp(join(tmpdir(), 'fourfold-bench-'))
  tempDirs.add(dir)
  const port = await freePort()
  const url = `http://127.0.0.1:${port}`
  const databaseUrl = `file:${join(dir, 'fourfold.db')}`
  let output = ''
  // Hash settings come only from the build's default or from extraEnv, never from the shell.
  const inherited = Object.fromEntries(Object.entries(process.env).filter(([key]) => !key.startsWith('NUXT_HASH_')))
  const child = spawn(process.execPath, [snapshotEntry], {
    cwd: dir,
    env: {
      ...inherited,
      NODE_ENV: 'production',
      PORT: String(port),
      HOST: '127.0.0.1',
      DATABASE_URL: databaseUrl,
      MAIL_DIR: join(dir, 'mail'),
      SMTP_URL: '',
      NUXT_APP_URL: url,
      NUXT_SESSION_PASSWORD: randomBytes(32).toString('hex'),
      NUXT_SESSION_COOKIE_SECURE: 'false',
      // Each request names its own address through X-Forwarded-For.
      TRUST_PROXY: '1',
      ...extraEnv,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  children.add(child)
  // Keep only the tail of the server's output, for error messages.
  const keep = d => (output = (output + d.toString()).slice(-20_000))
  child.stdout.on('data', keep)
  child.stderr.on('data', keep)

  const deadline = Date.now() + HEALTH_TIMEOUT_MS
  for (let attempt = 0; attempt < 1000; attempt++) {
    if (child.exitCode !== null) throw new Error(`${label} server exited early (${child.exitCode}):\n${output}`)
    try {
      const res = await fetch(`${url}/api/health`, { signal: AbortSignal.timeout(2000) })
      if (res.ok) {
        const server = { label, url, databaseUrl, child, output: () => output }
        servers.push(server)
        return server
      }
    }
    catch { /* not listening yet */ }
    if (Date.now() > deadline) break
    await sleep(150)
  }
  throw new Error(`${label} server did not answer /api/health within ${HEALTH_TIMEOUT_MS / 1000} s:\n${output}`)
}

// Addresses from 198.18.0.0/15 (RFC 2544, for benchmarks); one per request.
let addressCounter = 0
function nextAddress() {
  addressCounter = (addressCounter + 1) % 65_536
  return `198.18.${addressCounter >> 8}.${addressCounter & 255}`
}

async function post(server, path, body) {
  return fetch(`${server.url}${path}`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-forwarded-for': nextAddress() },
    body: JSON.stringify(body),
    signal: AbortSignal.timeout(30_000),
  })
}

async function signUp(server, email) {
  const res = await post(server, '/api/auth/signup', { organisation: `Bench ${server.label}`, name: 'Bench Admin', email, password: PASSWORD })
  if (res.status !== 201) throw new Error(`${server.label}: sign-up answered ${res.status}: ${await res.text()}\n${server.output()}`)
}

/** Signs in once and returns the session cookie as "name=value". */
async function signIn(server, email) {
  const res = await post(server, '/api/auth/login', { email, password: PASSWORD })
  if (res.status !== 200) throw new Error(`${server.label}: sign-in answered ${res.status}: ${await res.text()}`)
  const cookie = res.headers.getSetCookie().map(c => c.split(';')[0]).find(c => c.startsWith('fourfold-session='))
  if (!cookie) throw new Error(`${server.label}: sign-in set no fourfold-session cookie`)
  return cookie
}

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
// p97.5 (whole milliseconds, from its HDR histogram) as a sanity test.
function percentile(sorted, p) {
  if (!sorted.length) return Number.NaN
  return sorted[Math.min(sorted.length, Math.max(1, Math.ceil((p / 100) * sorted.length))) - 1]
}

// CPU time the server process (all its threads) used, from /proc (Linux); null elsewhere.
let clockTicks
function serverCpuSeconds(server) {
  try {
    clockTicks ??= Number(execFileSync('getconf', ['CLK_TCK'], { encoding: 'utf8' }).trim()) || 100
    // Fields after the ")" that closes the command name: utime and stime are the 12th and 13th.
    const stat = readFileSync(`/proc/${server.child.pid}/stat`, 'utf8')
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ')
    return (Number(fields[11]) + Number(fields[12])) / clockTicks
  }
  catch {
    return null
  }
}

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

function table(rows) {
  const head = ['measurement', 'conns', 'seconds', 'requests', 'per s', 'p50 ms', 'p95 ms', 'p99 ms', 'max ms', 'server CPUs']
  const body = rows.map(r => [r.name, r.connections, r.seconds.toFixed(1), r.count, r.perSecond.toFixed(1), r.p50.toFixed(2), r.p95.toFixed(2), r.p99.toFixed(2), r.max.toFixed(2), r.serverCpus === null ? 'n/a' : r.serverCpus.toFixed(2)].map(String))
  const widths = head.map((h, i) => Math.max(h.length, ...body.map(b => b[i].length)))
  const line = cells => cells.map((c, i) => (i === 0 ? c.padEnd(widths[i]) : c.padStart(widths[i]))).join('  ')
  return [line(head), widths.map(w => '-'.repeat(w)).join('  '), ...body.map(line)].join('\n')
}

const loadAverage = () => loadavg().map(n => n.toFixed(2)).join(' ')
const round = (n, digits) => Number(n.toFixed(digits))

// ---- main --------------------------------------------------------------------------------

async function main() {
  const build = await ensureBuild()
  await snapshotBuild()
  log(`Build: ${build}; servers run from a private copy`)
  log(`Machine: ${cpus().length} CPUs, Node ${process.version}, UV_THREADPOOL_SIZE ${process.env.UV_THREADPOOL_SIZE ?? '4 (default)'}; load average ${loadAverage()}`)
  log(`${duration} s per measurement; GETs after a ${WARMUP_SECONDS} s warm-up, sign-ins after ${2 * SIGNIN_CONNECTIONS} warm-up sign-ins`)

  const [chosen, fallback] = await Promise.all([
    startServer('project N=2^17', {}),
    startServer('nuxt-auth-utils default N=2^14', DEFAULT_HASH_ENV),
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
  log(table(rows))
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
  for (const server of servers) {
    const state = server.child.exitCode === null && server.child.signalCode === null ? 'running' : `exited (${server.child.exitCode ?? server.child.signalCode})`
    console.error(`\n--- ${server.label} server, ${state}; end of its output:\n${server.output().slice(-3000)}`)
  }
  await cleanUp()
  process.exitCode = 1
}
