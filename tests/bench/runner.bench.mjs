// The lesson runner's two costs, measured in real Chromium against built apps in one run.
//
//   npm run bench:runner              uses the existing .output build (builds it if missing)
//   npm run bench:runner -- --build   rebuilds first (npx nuxt build, under the build lock)
//   ... -- --samples 300              measured taps per side (50–5000, default 300)
//   ... -- --output DIR               measures another build's output folder instead of .output
//   FOURFOLD_BUILD_LOCK_HELD=1        the caller holds the build lock for the whole run (lib/build.mjs)
//
// (a) Tap → IndexedDB committed: the app's own appendEvent (app/utils/localdb.ts, bundled as it
//     is by Vite, nothing added to the app) awaited in a page of the built app, beside a raw
//     IndexedDB put with strict durability in the same page, interleaved one for one.
// (b) JS loaded: the sum of the gzip sizes (level 9) of every script the runner route
//     /lessons/<id> requests, read from .output/public, beside a bare one-page Nuxt app built in
//     this run in a temporary folder with the same nuxt. Both servers run from private copies.
// A table is printed for people; the very last line is one JSON object (DESIGN §6).
import { spawn } from 'node:child_process'
import { randomBytes, randomUUID } from 'node:crypto'
import { existsSync, rmSync, statSync } from 'node:fs'
import { mkdtemp, rm } from 'node:fs/promises'
import { createServer } from 'node:net'
import { loadavg, tmpdir } from 'node:os'
import { dirname, join, resolve } from 'node:path'
import { fileURLToPath } from 'node:url'
import { build as viteBuild } from 'vite'
import { BARE_HEADING, buildBareNuxt } from './lib/bare-nuxt.mjs'
import { buildLockHeld } from './lib/build.mjs'
import { cleanUp as cleanUpLib } from './lib/cleanup.mjs'
import { gzipKiB, launchChromium, scriptsLoadedBy } from './lib/page-scripts.mjs'

const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..')
const LOCK = '/tmp/fourfold-build.lock'
const BUILD_TIMEOUT_MS = 15 * 60_000
const HEALTH_TIMEOUT_MS = 60_000
const WARMUP = 30
const PASSWORD = 'correct horse battery staple'

const args = process.argv.slice(2)
const forceBuild = args.includes('--build')
const samples = parseSamples(args)
const otherOutput = args.includes('--output') ? resolve(args[args.indexOf('--output') + 1] ?? '') : null
if (otherOutput && forceBuild) throw new Error('--output and --build do not go together')
if (otherOutput && !existsSync(join(otherOutput, 'server/index.mjs'))) throw new Error(`--output ${otherOutput} has no server/index.mjs`)
// Under the caller's hold of the build lock, the commands below must not wait for it again.
const lockHeld = buildLockHeld()
const underLock = (command, commandArgs) => (lockHeld ? [command, commandArgs] : ['flock', [LOCK, command, ...commandArgs]])

function parseSamples(list) {
  const i = list.indexOf('--samples')
  if (i === -1) return 300
  const value = Number(list[i + 1])
  if (!Number.isInteger(value) || value < 50 || value > 5000) throw new Error('--samples takes a whole number from 50 to 5000')
  return value
}

const sleep = ms => new Promise(r => setTimeout(r, ms))
const log = (...parts) => console.log(...parts)

// ---- clean-up, also on error and Ctrl-C --------------------------------------------

const children = new Set()
const tempDirs = new Set()
let browser

async function cleanUp() {
  await browser?.close().catch(() => undefined)
  // The bare build's folder and process are tracked by the shared lib.
  await cleanUpLib()
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

process.on('exit', () => {
  for (const child of children) child.kill('SIGKILL')
  for (const dir of tempDirs) rmSync(dir, { recursive: true, force: true })
})
for (const signal of ['SIGINT', 'SIGTERM']) {
  process.once(signal, () => {
    console.error(`\n${signal}: stopping`)
    cleanUp().finally(() => process.exit(130))
  })
}

async function tempDir(prefix) {
  const dir = await mkdtemp(join(tmpdir(), prefix))
  tempDirs.add(dir)
  return dir
}

/** Runs a command to the end, its output on stderr so stdout stays the report. */
async function run(command, commandArgs, options = {}) {
  const child = spawn(command, commandArgs, { stdio: ['ignore', process.stderr, process.stderr], ...options })
  children.add(child)
  const timer = setTimeout(() => child.kill('SIGTERM'), BUILD_TIMEOUT_MS)
  const code = await new Promise(r => child.once('exit', (c, s) => r(c ?? s)))
  clearTimeout(timer)
  children.delete(child)
  if (code !== 0) throw new Error(`${command} ${commandArgs.join(' ')} failed (${code})`)
}

// ---- builds (one nuxt build at a time in this machine's checkout: the build lock) -------

async function appBuild() {
  if (otherOutput) {
    const dir = await tempDir('fourfold-bench-app-')
    await run('cp', ['-r', otherOutput, join(dir, 'output')])
    return { output: join(dir, 'output'), how: `${otherOutput} (--output)` }
  }
  const entry = join(root, '.output/server/index.mjs')
  let how = `existing .output (built ${existsSync(entry) ? statSync(entry).mtime.toISOString() : '?'}; pass --build to rebuild)`
  const dir = await tempDir('fourfold-bench-app-')
  const started = Date.now()
  // Build (if asked or missing) and copy in one hold of the lock, so no other build can change
  // .output half-way; the copy then serves the measurements whatever happens in the tree.
  const build = forceBuild || !existsSync(entry)
  if (build) how = `fresh build (${forceBuild ? '--build given' : '.output missing'})`
  log(`${build ? 'Building the app and copying' : 'Copying'} .output under ${LOCK} …`)
  await run(...underLock('sh', ['-c', `${build ? 'npx nuxt build && ' : ''}cp -r .output "${join(dir, 'output')}"`]), { cwd: root, env: { ...process.env, NODE_ENV: 'production' } })
  if (build) how += `, ${Math.round((Date.now() - started) / 1000)} s`
  const output = join(dir, 'output')
  if (!existsSync(join(output, 'server/index.mjs')) || !existsSync(join(output, 'nitro.json'))) throw new Error('the copy of .output is incomplete; run again with --build')
  return { output, how }
}

/** The bare one-page Nuxt app (tests/bench/lib/bare-nuxt.mjs), built in this run. */
async function bareBuild() {
  return buildBareNuxt({ lock: !lockHeld, log })
}

/** app/utils/localdb.ts bundled as it is (Dexie included) for the page, exposed as window.FourfoldLocalDb. */
async function localDbBundle() {
  const result = await viteBuild({
    configFile: false,
    root,
    logLevel: 'silent',
    resolve: { alias: { '#shared': join(root, 'shared') } },
    build: {
      write: false,
      lib: { entry: join(root, 'app/utils/localdb.ts'), name: 'FourfoldLocalDb', formats: ['iife'], fileName: () => 'localdb.js' },
    },
  })
  const outputs = (Array.isArray(result) ? result : [result]).flatMap(r => r.output)
  return outputs.find(o => o.type === 'chunk').code
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

async function startServer(label, output) {
  const dir = await tempDir('fourfold-bench-run-')
  const port = await freePort()
  const url = `http://127.0.0.1:${port}`
  let tail = ''
  const child = spawn(process.execPath, [join(output, 'server/index.mjs')], {
    cwd: dir,
    env: {
      ...process.env,
      NODE_ENV: 'production',
      PORT: String(port),
      HOST: '127.0.0.1',
      DATABASE_URL: `file:${join(dir, 'fourfold.db')}`,
      MAIL_DIR: join(dir, 'mail'),
      UPLOAD_DIR: join(dir, 'uploads'),
      SMTP_URL: '',
      NUXT_APP_URL: url,
      NUXT_SESSION_PASSWORD: randomBytes(32).toString('hex'),
      NUXT_SESSION_COOKIE_SECURE: 'false',
      TRUST_PROXY: '1',
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  children.add(child)
  const keep = d => (tail = (tail + d.toString()).slice(-20_000))
  child.stdout.on('data', keep)
  child.stderr.on('data', keep)
  const deadline = Date.now() + HEALTH_TIMEOUT_MS
  // The bare app has no /api/health: any answer to / will do there.
  const probe = label === 'bare' ? '/' : '/api/health'
  while (Date.now() < deadline) {
    if (child.exitCode !== null) throw new Error(`${label} server exited early (${child.exitCode}):\n${tail}`)
    try {
      if ((await fetch(url + probe, { signal: AbortSignal.timeout(2000) })).ok) return { url, output }
    }
    catch { /* not listening yet */ }
    await sleep(150)
  }
  throw new Error(`${label} server did not answer within ${HEALTH_TIMEOUT_MS / 1000} s:\n${tail}`)
}

/** A signed-in admin's cookie jar for fetch, with one published breakdown and one learner. */
async function seed(server) {
  let cookie = ''
  const call = async (method, path, body) => {
    const res = await fetch(server.url + path, {
      method,
      headers: { 'content-type': 'application/json', 'x-forwarded-for': '198.18.0.1', ...(cookie ? { cookie } : {}) },
      body: body === undefined ? undefined : JSON.stringify(body),
    })
    const set = res.headers.getSetCookie().map(c => c.split(';')[0]).filter(c => !c.endsWith('='))
    if (set.length) cookie = set.join('; ')
    const text = await res.text()
    if (!res.ok) throw new Error(`${method} ${path} answered ${res.status}: ${text}`)
    return text ? JSON.parse(text) : null
  }
  await call('POST', '/api/auth/signup', { organisation: 'Hollowmere Bakery (bench)', name: 'Bench Admin', email: `bench-${randomUUID()}@bench.example`, password: PASSWORD })
  const job = await call('POST', '/api/jobs', { title: 'Shape baguettes', purpose: 'Even loaves.', toolsAndMaterials: ['Bench scraper'], workplaceArrangement: 'Couche to the right.' })
  const draft = await call('POST', `/api/jobs/${job.id}/versions`)
  const steps = ['Pre-shape the dough', 'Rest it seam side up', 'Roll out to length', 'Score the top'].map(text => ({
    id: randomUUID(), text, photoId: null,
    keyPoints: [{ id: randomUUID(), kind: 'quality', text: `${text}: keep the skin tight`, reason: 'So it rises evenly', photoId: null }],
  }))
  await call('PATCH', `/api/versions/${draft.id}`, { revision: 0, content: { units: [{ id: randomUUID(), title: '', steps }] } })
  await call('POST', `/api/versions/${draft.id}/publish`, { changeNote: 'First version.' })
  const learner = await call('POST', '/api/learners', { name: 'Ilse Brannagh' })
  const me = await call('GET', '/api/me')
  return { cookie, jobId: job.id, versionId: draft.id, learnerId: learner.id, me }
}

// ---- browser ------------------------------------------------------------------------------

async function newContext(baseURL) {
  // Service workers off: every script the page asks for is then a visible request. The app's
  // Content-Security-Policy refuses inline scripts, and the measurement is injected as one:
  // bypassCSP lets only this benchmark's own script in (the app's scripts are what they are).
  return browser.newContext({ baseURL, viewport: { width: 1024, height: 768 }, serviceWorkers: 'block', bypassCSP: true, locale: 'en-GB', extraHTTPHeaders: { 'x-forwarded-for': '198.18.0.2' } })
}

/** Nearest-rank percentile of a sorted list. */
function percentile(sorted, p) {
  return sorted[Math.min(sorted.length - 1, Math.max(0, Math.ceil((p / 100) * sorted.length) - 1))]
}

/**
 * In the page, interleaved one for one and rotating which goes first, milliseconds each:
 * - app: appendEvent, the app's own code (device id, then one strict transaction: next sequence
 *   number, the event, the lesson's updatedAt);
 * - raw: one IndexedDB put with strict durability (the yardstick);
 * - rawSameWork: plain IndexedDB doing appendEvent's work in one strict transaction, and
 *   dexieAdd: one Dexie add in a strict transaction. These two only explain where the time goes.
 */
async function measureCommits(page, { lessonId, count, warmup }) {
  return page.evaluate(async ({ lessonId, count, warmup }) => {
    const app = window.FourfoldLocalDb
    const raw = await new Promise((resolve, reject) => {
      const open = indexedDB.open('fourfold-bench-raw', 1)
      open.onupgradeneeded = () => {
        open.result.createObjectStore('events', { keyPath: 'id' })
        open.result.createObjectStore('meta', { keyPath: 'key' })
        open.result.createObjectStore('lessons', { keyPath: 'id' })
      }
      open.onsuccess = () => resolve(open.result)
      open.onerror = () => reject(open.error)
    })
    const done = tx => new Promise((resolve, reject) => {
      tx.oncomplete = resolve
      tx.onerror = () => reject(tx.error)
      tx.onabort = () => reject(tx.error)
    })
    const seed = raw.transaction('lessons', 'readwrite', { durability: 'strict' })
    seed.objectStore('lessons').put({ id: lessonId, updatedAt: 0 })
    await done(seed)
    const rawPut = (event) => {
      const tx = raw.transaction('events', 'readwrite', { durability: 'strict' })
      tx.objectStore('events').put(event)
      return done(tx)
    }
    const rawSameWork = (event) => {
      const tx = raw.transaction(['meta', 'events', 'lessons'], 'readwrite', { durability: 'strict' })
      const meta = tx.objectStore('meta')
      const lessons = tx.objectStore('lessons')
      const seqRequest = meta.get('seq')
      seqRequest.onsuccess = () => {
        meta.put({ key: 'seq', value: (seqRequest.result?.value ?? 0) + 1 })
        tx.objectStore('events').add(event)
        const lessonRequest = lessons.get(event.lessonId)
        lessonRequest.onsuccess = () => lessons.put({ ...lessonRequest.result, updatedAt: event.clientTime })
      }
      return done(tx)
    }
    const elements = ['s1', 's2', 's3', 's4']
    const values = ['unaided', 'cued', 'missed']
    const kinds = ['app', 'raw', 'rawSameWork', 'dexieAdd']
    const times = { app: [], raw: [], rawSameWork: [], dexieAdd: [] }
    for (let i = 0; i < warmup + count; i++) {
      const input = { lessonId, pass: 'T1-1', elementId: elements[i % 4], kind: 'mark', value: values[i % 3] }
      const event = () => ({ ...input, id: crypto.randomUUID(), clientTime: Date.now(), deviceId: 'bench', seq: i, synced: 0 })
      for (let k = 0; k < kinds.length; k++) {
        const which = kinds[(i + k) % kinds.length]
        const t0 = performance.now()
        if (which === 'app') await app.appendEvent(input)
        else if (which === 'raw') await rawPut(event())
        else if (which === 'rawSameWork') await rawSameWork(event())
        else await app.localDb().events.add({ ...event(), lessonId: 'bench-dexie-add' })
        const ms = performance.now() - t0
        if (i >= warmup) times[which].push(ms)
      }
    }
    raw.close()
    return times
  }, { lessonId, count, warmup })
}

// ---- the run ------------------------------------------------------------------------------

async function main() {
  log(`Runner benchmark · load average ${loadavg().map(n => n.toFixed(2)).join(' ')} · ${samples} taps per side after ${WARMUP} warm-up`)
  const app = await appBuild()
  const bare = await bareBuild()
  const bundle = await localDbBundle()

  const appServer = await startServer('app', app.output)
  const bareServer = await startServer('bare', bare.output)
  const data = await seed(appServer)
  browser = await launchChromium()

  // The coach's tablet: signed in, tablet data downloaded by the app itself.
  const context = await newContext(appServer.url)
  const [name, ...rest] = data.cookie.split('; ')[0].split('=')
  await context.addCookies([{ name, value: rest.join('='), url: appServer.url }])
  const page = await context.newPage()
  await page.goto('/')
  await page.getByText('Breakdowns on this tablet: 1,').waitFor({ timeout: 30_000 })
  await page.addScriptTag({ content: bundle })
  const lessonId = randomUUID()
  const now = Date.now()
  await page.evaluate(lesson => window.FourfoldLocalDb.saveLesson(lesson), {
    id: lessonId, organisationId: data.me.organisation.id, coachUserId: data.me.user.id, learnerId: data.learnerId, jobId: data.jobId, versionId: data.versionId,
    place: 'Bench 2', startedAt: now, updatedAt: now, cursor: { stage: 'tryout', pass: 'T1-1', index: 0 }, prepare: {}, helper: '', decision: null,
    acknowledgement: null, signedOffAt: null, stageSeconds: {}, synced: 0,
  })

  // (a) commit latency
  const times = await measureCommits(page, { lessonId, count: samples, warmup: WARMUP })
  for (const list of Object.values(times)) list.sort((a, b) => a - b)
  const { app: appMs, raw: rawMs } = times
  const stored = await page.evaluate(id => window.FourfoldLocalDb.lessonEvents(id).then(list => list.length), lessonId)
  if (stored !== samples + WARMUP) throw new Error(`appendEvent stored ${stored} events, expected ${samples + WARMUP}`)

  // (b) scripts loaded by the runner route, from a fresh page of the same tablet.
  const runnerPage = await context.newPage()
  let runnerHeading = ''
  const runnerScripts = await scriptsLoadedBy(runnerPage, `/lessons/${lessonId}`, async () => {
    await runnerPage.waitForFunction(() => document.querySelector('#__nuxt')?.children.length > 0, undefined, { timeout: 30_000 })
    runnerHeading = (await runnerPage.locator('h1, h2').first().innerText({ timeout: 15_000 }).catch(() => '(no heading)')).trim()
  })
  const bareContext = await newContext(bareServer.url)
  const barePage = await bareContext.newPage()
  const bareScripts = await scriptsLoadedBy(barePage, '/', () => barePage.getByRole('heading', { name: BARE_HEADING }).waitFor())
  const runnerJs = gzipKiB(app.output, runnerScripts)
  const bareJs = gzipKiB(bare.output, bareScripts)

  const chromiumVersion = browser.version()
  await cleanUp()

  const r2 = n => Math.round(n * 100) / 100
  const figures = {
    idb_commit_p50_ms: r2(percentile(appMs, 50)),
    idb_commit_p95_ms: r2(percentile(appMs, 95)),
    idb_raw_p50_ms: r2(percentile(rawMs, 50)),
    idb_raw_p95_ms: r2(percentile(rawMs, 95)),
    idb_ratio: 0,
    runner_js_gzip_kb: r2(runnerJs.kib),
    bare_js_gzip_kb: r2(bareJs.kib),
    js_ratio: 0,
  }
  figures.idb_ratio = r2(percentile(appMs, 95) / percentile(rawMs, 95))
  figures.js_ratio = r2(runnerJs.kib / bareJs.kib)

  log('')
  log(`Chromium ${chromiumVersion} · app: ${app.how} · bare: ${bare.how}${lockHeld ? ' · build lock held for the whole run' : ''}`)
  log('')
  log('| tap → IndexedDB committed (strict durability) | p50 ms | p95 ms | max ms |')
  log('| --- | ---: | ---: | ---: |')
  log(`| appendEvent (app/utils/localdb.ts) | ${figures.idb_commit_p50_ms} | ${figures.idb_commit_p95_ms} | ${r2(appMs.at(-1))} |`)
  log(`| raw IndexedDB put | ${figures.idb_raw_p50_ms} | ${figures.idb_raw_p95_ms} | ${r2(rawMs.at(-1))} |`)
  log(`| ratio (p95) | | ${figures.idb_ratio}× | goal ≤ 1.5× |`)
  log(`| (to explain) raw IndexedDB doing appendEvent's work | ${r2(percentile(times.rawSameWork, 50))} | ${r2(percentile(times.rawSameWork, 95))} | ${r2(times.rawSameWork.at(-1))} |`)
  log(`| (to explain) one Dexie add | ${r2(percentile(times.dexieAdd, 50))} | ${r2(percentile(times.dexieAdd, 95))} | ${r2(times.dexieAdd.at(-1))} |`)
  log('')
  log('| JS loaded (gzip -9 of each script requested) | scripts | KiB |')
  log('| --- | ---: | ---: |')
  log(`| runner /lessons/<id> ("${runnerHeading.slice(0, 40)}") | ${runnerScripts.length} | ${figures.runner_js_gzip_kb} |`)
  log(`| bare Nuxt page / | ${bareScripts.length} | ${figures.bare_js_gzip_kb} |`)
  log(`| ratio | | ${figures.js_ratio}× (goal ≤ 2×) |`)
  log('')
  log('Runner scripts (gzip bytes), largest first: ' + runnerJs.files.sort((a, b) => b.size - a.size).map(f => `${f.path.replace('/_nuxt/', '')} ${f.size}`).join(', '))
  log(`Load average at the end: ${loadavg().map(n => n.toFixed(2)).join(' ')}`)
  const keys = ['idb_commit_p95_ms', 'idb_raw_p95_ms', 'idb_ratio', 'runner_js_gzip_kb', 'bare_js_gzip_kb', 'js_ratio']
  log(JSON.stringify(Object.fromEntries(keys.map(k => [k, figures[k]]))))
}

main().catch(async (error) => {
  console.error(error)
  await cleanUp()
  process.exit(1)
})
