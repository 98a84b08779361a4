// JS budgets per screen, checked by size-limit (@size-limit/file, gzip level 9), run by `npm test` (after the tests) and `npm run test:budgets`.
//
//   npm run budget:js                 the existing .output (FOURFOLD_OUTPUT=DIR: another build's copy)
//
// What a screen "loads" is measured, not guessed: the demo bakery is seeded into the built server,
// a coach's tablet in Debian's Chromium (service workers blocked, so every script is a request)
// downloads its data, starts a lesson and a spot check, and each offline screen of DESIGN.md §4
// (app/utils/offline.ts worksOffline) is loaded once; every script the load requests is read from
// the build's public folder (tests/bench/lib/page-scripts.mjs, the runner benchmark's method).
// A bare one-page Nuxt app is built in a temporary folder with the same nuxt and measured the same
// way. size-limit then checks:
// - the lesson runner, opened at each of its four stages (each stage's scripts load when the
//   lesson reaches it): at most 2× the bare page (issue 4 and issue 7);
// - every other offline screen: an absolute limit a little above its size when the budget was set,
//   so growth fails the test (raise a limit only with a reason in the commit).
// A table for people, then the size-limit report; the last line is one JSON object of the figures.
import { spawnSync } from 'node:child_process'
import { writeFile } from 'node:fs/promises'
import { dirname, join, resolve } from 'node:path'
import sizeLimit from 'size-limit'
import filePlugin from '@size-limit/file'
import { BARE_HEADING, buildBareNuxt } from '../bench/lib/bare-nuxt.mjs'
import { root, snapshotBuild } from '../bench/lib/build.mjs'
import { cleanUp, makeTempDir } from '../bench/lib/cleanup.mjs'
import { DEMO, demoSession, downloadTabletData, getAs, hydrated, moveLessonTo, seedDemo, signInContext, startCheck, startLesson } from '../bench/lib/demo-tablet.mjs'
import { launchChromium, publicFiles, scriptsLoadedBy } from '../bench/lib/page-scripts.mjs'
import { reportServers, startServer } from '../bench/lib/server.mjs'

/** The runner may load at most this many times the bare page's JS. */
const RUNNER_RATIO = 2

/**
 * Absolute limits (gzip KiB, 1 KiB = 1,024 bytes) of the other offline screens: their sizes measured
 * on 2 December 2026 (after zod and the second hookable left the entry; Today 125.90, the smallest,
 * /needs-connection, 115.22), rounded up to the next whole KiB plus 2 KiB.
 */
const LIMITS_KIB = {
  'Today /': 128,
  'Start a lesson /lessons/new': 127,
  'Lesson review /lessons/review/<id>': 131,
  'Printable record /lessons/review/<id>/print': 130,
  'Second coach /lessons/<id>/observe': 129,
  'Start a spot check /checks/new': 125,
  'Spot check runner /checks/<id>': 131,
  'My training /study': 126,
  'Study cards /study/<versionId>': 125,
  'Needs a connection /needs-connection': 118,
}
const STAGES = ['prepare', 'present', 'tryout', 'followup']

const log = (...parts) => console.log(...parts)
let browser

async function main() {
  const from = process.env.FOURFOLD_OUTPUT ? resolve(process.env.FOURFOLD_OUTPUT) : join(root, '.output')
  // A private copy (under the build lock when it is the checkout's .output), so a rebuild in the
  // tree cannot change the files between the measurement and size-limit.
  const appEntry = await snapshotBuild({ lock: !process.env.FOURFOLD_OUTPUT, from })
  const appOutput = dirname(dirname(appEntry))
  const bare = await buildBareNuxt()
  const app = await startServer(appEntry, 'app')
  const bareServer = await startServer(join(bare.output, 'server/index.mjs'), 'bare', {}, { health: '/' })
  await seedDemo(app)

  browser = await launchChromium()
  const contextFor = async (url, session) => {
    // Service workers off: every script the page asks for is then a visible request.
    const context = await browser.newContext({ baseURL: url, viewport: { width: 1024, height: 768 }, serviceWorkers: 'block', locale: 'en-GB' })
    if (session) await signInContext(context, app, session)
    return context
  }
  const sessions = { coach: await demoSession(app, DEMO.coach), admin: await demoSession(app, DEMO.admin), learner: await demoSession(app, DEMO.learner) }
  const lessonRecord = (await getAs(app, sessions.coach, '/api/records?kind=lesson&limit=20')).rows.find(r => r.kind === 'lesson' && r.finishedAt)
  if (!lessonRecord) throw new Error('the demo has no finished lesson to review')
  const studyVersion = (await getAs(app, sessions.learner, '/api/me/training')).cards[0]?.versionId
  if (!studyVersion) throw new Error('the demo learner has no study cards')

  // The coach's tablet: its data downloaded by the app, a lesson and a spot check started on it.
  const coach = await contextFor(app.url, sessions.coach)
  const setup = await coach.newPage()
  await downloadTabletData(setup)
  const lessonId = await startLesson(setup)
  const checkId = await startCheck(setup)
  // A page of the app's origin without the app, for moving the lesson between stages in IndexedDB.
  await setup.goto('/fourfold.svg')
  const learner = await contextFor(app.url, sessions.learner)

  const heading = page => async () => {
    await hydrated(page)
    await page.locator('h1').first().waitFor({ timeout: 30_000 })
  }
  /** Each screen loaded in a fresh page of its account's context. */
  const screens = [
    { name: 'Today /', context: coach, path: '/', ready: page => () => page.getByText(/Breakdowns on this tablet: [1-9]/).waitFor() },
    { name: 'Start a lesson /lessons/new', context: coach, path: '/lessons/new', ready: page => () => page.locator('[data-pick="learner"]').first().waitFor() },
    ...STAGES.map(stage => ({
      name: `Lesson runner /lessons/<id> at ${stage}`,
      context: coach,
      path: `/lessons/${lessonId}`,
      runnerStage: stage,
      ready: page => () => page.locator(`main#main[data-stage="${stage}"]`).waitFor({ timeout: 30_000 }),
    })),
    { name: 'Lesson review /lessons/review/<id>', context: coach, path: `/lessons/review/${lessonRecord.id}`, ready: heading },
    { name: 'Printable record /lessons/review/<id>/print', context: coach, path: `/lessons/review/${lessonRecord.id}/print`, ready: heading },
    { name: 'Second coach /lessons/<id>/observe', context: await contextFor(app.url, sessions.admin), path: `/lessons/${lessonRecord.id}/observe`, ready: heading },
    { name: 'Start a spot check /checks/new', context: coach, path: '/checks/new', ready: page => () => page.getByRole('button', { name: 'Start the spot check' }).waitFor() },
    { name: 'Spot check runner /checks/<id>', context: coach, path: `/checks/${checkId}`, ready: page => () => page.getByTestId('check-card').waitFor({ timeout: 30_000 }) },
    { name: 'My training /study', context: learner, path: '/study', ready: heading },
    { name: 'Study cards /study/<versionId>', context: learner, path: `/study/${studyVersion}`, ready: heading },
    { name: 'Needs a connection /needs-connection', context: coach, path: '/needs-connection', ready: heading },
  ]

  const measured = []
  for (const screen of screens) {
    if (screen.runnerStage) await moveLessonTo(setup, lessonId, screen.runnerStage)
    const page = await screen.context.newPage()
    const scripts = await scriptsLoadedBy(page, screen.path, screen.ready(page))
    if (!scripts.length) throw new Error(`${screen.name} requested no script`)
    measured.push({ ...screen, scripts, files: publicFiles(appOutput, scripts) })
    await page.close()
  }
  const bareContext = await contextFor(bareServer.url)
  const barePage = await bareContext.newPage()
  const bareScripts = await scriptsLoadedBy(barePage, '/', () => barePage.getByRole('heading', { name: BARE_HEADING }).waitFor())
  const bareFiles = publicFiles(bare.output, bareScripts)
  await browser.close()
  browser = undefined

  // The yardstick, by size-limit's own gzip measure, then one check per screen.
  const [{ size: bareBytes }] = await sizeLimit([filePlugin], { checks: [{ files: bareFiles, gzip: true }] })
  const runnerLimit = RUNNER_RATIO * bareBytes
  for (const s of measured) if (!s.runnerStage && !LIMITS_KIB[s.name]) throw new Error(`${s.name} has no limit in LIMITS_KIB`)
  const checks = [
    { name: 'Bare Nuxt page / (the yardstick, no limit)', path: bareFiles, gzip: true },
    ...measured.map(s => ({
      name: s.name,
      path: s.files,
      gzip: true,
      limit: s.runnerStage ? `${runnerLimit} B` : `${LIMITS_KIB[s.name]} KiB`,
    })),
  ]
  const configDir = await makeTempDir('fourfold-size-limit-')
  const config = join(configDir, '.size-limit.json')
  await writeFile(config, JSON.stringify(checks, null, 2))

  const sizes = await sizeLimit([filePlugin], { checks: checks.map(c => ({ files: c.path, gzip: true })) })
  log(`\nJS per screen (gzip -9 of every script its load requests; KiB = 1,024 bytes, size-limit below prints kB = 1,000) · app ${appOutput} · bare ${bare.how}`)
  log('| screen | scripts | KiB | limit KiB | × bare |')
  log('| --- | ---: | ---: | ---: | ---: |')
  const kib = bytes => Math.round((bytes / 1024) * 100) / 100
  checks.forEach((check, i) => {
    const limit = check.limit ? (check.limit.endsWith(' B') ? kib(Number.parseFloat(check.limit)) : Number.parseFloat(check.limit)) : ''
    log(`| ${check.name} | ${check.path.length} | ${kib(sizes[i].size)} | ${limit} | ${(sizes[i].size / bareBytes).toFixed(2)} |`)
  })
  log('\nsize-limit:')
  // The CLI judges the limits and says by how much a check is over; its exit code is the verdict.
  const result = spawnSync(process.execPath, [join(root, 'node_modules/size-limit/bin.js'), '--config', config], { cwd: root, stdio: 'inherit' })
  const runnerSizes = measured.map((s, i) => ({ s, size: sizes[i + 1].size })).filter(x => x.s.runnerStage)
  const figures = {
    bare_js_gzip_kb: kib(bareBytes),
    runner_js_gzip_kb_max: kib(Math.max(...runnerSizes.map(x => x.size))),
    runner_ratio_max: Math.round((Math.max(...runnerSizes.map(x => x.size)) / bareBytes) * 100) / 100,
    ...Object.fromEntries(runnerSizes.map(x => [`runner_${x.s.runnerStage}_kb`, kib(x.size)])),
    passed: result.status === 0,
  }
  await cleanUp()
  log(JSON.stringify(figures))
  process.exit(result.status === 0 ? 0 : 1)
}

main().catch(async (error) => {
  console.error(error)
  reportServers()
  await browser?.close().catch(() => undefined)
  await cleanUp()
  process.exit(1)
})
