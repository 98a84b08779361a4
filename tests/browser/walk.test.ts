// A walk through every screen (issue 7, item 6), on the demo bakery (npm run seed) in real Chromium
// at both tablet shapes: signed out, then signed in as each role of DESIGN.md §2 (admin, coach,
// learner, auditor), every page under app/pages/ that the visitor may open (tests/support/screens.ts,
// kept complete by tests/unit/screens-covered.test.ts) is opened with real ids, photographed (whole
// page) into tests/.artifacts/walk/ and checked with axe-core (WCAG 2.2 AA rules). Any console
// error, uncaught page error, failed request or 4xx/5xx answer to the page's own requests fails it,
// and so does a screen wider than the tablet.
// A coach's or admin's tablet first downloads its data on Today and starts a lesson and a spot check
// (they live on the tablet), so the runners open on real ones. Pages a role may not open are
// opened too (landscape only): the app sends the visitor to Today, again without an error.
import { execFile } from 'node:child_process'
import { randomUUID } from 'node:crypto'
import { mkdir, mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { promisify } from 'node:util'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { DEMO, DEMO_PASSWORD, startCheck, startLesson } from '../bench/lib/demo-tablet.mjs'
import { tokenFrom } from '../support/accounts'
import { axeViolations } from '../support/axe'
import { TABLET_LANDSCAPE, TABLET_VIEWPORTS, launchBrowser, openContext, overflowsSideways, waitForHydration } from '../support/browser'
import { Client, uniqueAddress } from '../support/http'
import { SCREENS, screenName, type Visitor, type WalkIds } from '../support/screens'
import { startServer, type TestServer } from '../support/server'
import { ROLES } from '../../shared/types/roles'

const SHOTS = 'tests/.artifacts/walk'
// The printable sheets are an A4 page (210 mm, 794 px at 96 px per inch) on screen as on paper, a
// little wider than a portrait tablet: they may scroll sideways there. No other screen may.
const A4_SHEETS = new Set(['/versions/:id/print', '/lessons/review/:id/print'])
const VISITORS: Visitor[] = ['signed-out', ...ROLES]

let dir: string
let server: TestServer
let browser: Browser
let ids: Omit<WalkIds, 'tabletLessonId' | 'tabletCheckId'>

async function signedIn(email: string): Promise<Client> {
  const client = new Client(server.url, uniqueAddress())
  const res = await client.post('/api/auth/login', { email, password: DEMO_PASSWORD })
  if (res.status !== 200) throw new Error(`signing in ${email}: ${res.status} ${res.text}`)
  return client
}

async function ok<T = any>(reply: Promise<{ status: number, body: T, text: string }>, what: string, status = 200): Promise<T> {
  const res = await reply
  if (res.status !== status) throw new Error(`${what}: ${res.status} ${res.text}`)
  return res.body
}

beforeAll(async () => {
  // The demo organisation goes into the server's database file before the server starts.
  dir = await mkdtemp(join(tmpdir(), 'fourfold-walk-'))
  await promisify(execFile)(process.execPath, ['scripts/seed.mjs'], { env: { ...process.env, DATABASE_URL: `file:${join(dir, 'fourfold.db')}`, DEMO_PASSWORD } })
  server = await startServer({ dir })
  browser = await launchBrowser()
  await mkdir(SHOTS, { recursive: true })

  const admin = await signedIn(DEMO.admin)
  const coach = await signedIn(DEMO.coach)
  const learner = await signedIn(DEMO.learner)
  const jobs = await ok<Array<{ id: string, published: { id: string, number: number } | null }>>(admin.get('/api/jobs'), 'jobs')
  const job = jobs.find(j => (j.published?.number ?? 0) >= 2)
  if (!job) throw new Error('the demo has no job with two versions')
  const versions = await ok<Array<{ id: string, number: number }>>(admin.get(`/api/jobs/${job.id}/versions`), 'versions')
  const older = versions.find(v => v.number < job.published!.number)!
  const draft = await ok<{ id: string }>(admin.post(`/api/jobs/${job.id}/versions`), 'a draft', 201)
  const learners = await ok<Array<{ id: string }>>(coach.get('/api/learners'), 'learners')
  const records = await ok<{ rows: Array<{ id: string, kind: string, finishedAt: number | null }> }>(coach.get('/api/records?kind=lesson'), 'records')
  const training = await ok<{ cards: Array<{ versionId: string }>, lessons: Array<{ id: string }> }>(learner.get('/api/me/training'), 'my training')

  const invitee = `walk-${Date.now()}@bakery.example`
  await ok(admin.post('/api/invites', { email: invitee, role: 'learner' }), 'invite', 201)
  const invite = await server.waitForMail(m => m.to.includes(invitee))
  await ok(new Client(server.url, uniqueAddress()).post('/api/auth/forgot', { email: DEMO.auditor }), 'forgot', 202)
  const reset = await server.waitForMail(m => m.to.includes(DEMO.auditor))

  ids = {
    jobId: job.id,
    versionId: job.published!.id,
    olderVersionId: older.id,
    draftVersionId: draft.id,
    learnerId: learners[0]!.id,
    lessonId: records.rows.find(r => r.finishedAt)!.id,
    ownLessonId: training.lessons[0]!.id,
    studyVersionId: training.cards[0]!.versionId,
    inviteToken: tokenFrom(invite.links[0]!),
    resetToken: tokenFrom(reset.links[0]!),
  }
}, 180_000)

afterAll(async () => {
  await browser?.close()
  await server?.stop()
  if (dir) await rm(dir, { recursive: true, force: true })
})

/**
 * Error answers a page asks for on purpose. Each is the page finding something out, and says why;
 * any other 4xx/5xx is a failure.
 */
const EXPECTED_ANSWERS: Array<{ who: Visitor, method: string, path: string, status: number, why: string }> = [
  {
    who: 'signed-out',
    method: 'GET',
    path: '/api/me',
    status: 401,
    // app/middleware/auth.global.ts: on a page rendered in the browser (/lessons/**, /checks/**) a
    // missing session may only mean the session call failed for want of a connection, so the
    // middleware asks the server; 401 is the answer that sends a signed-out visitor to sign-in.
    why: 'the browser-rendered pages ask who is signed in before sending a visitor to sign-in',
  },
]

const expectedAnswer = (who: Visitor, method: string, url: URL, status: number) =>
  EXPECTED_ANSWERS.some(e => e.who === who && e.method === method && e.path === url.pathname && e.status === status)

/**
 * Everything that went wrong on the page while `screen` was open: console errors, uncaught errors,
 * requests that failed, and 4xx/5xx answers from our own server (less EXPECTED_ANSWERS).
 */
function watchProblems(page: Page, base: string, who: Visitor) {
  const problems: string[] = []
  let screen = '(setup)'
  page.on('console', (message) => {
    if (message.type() !== 'error') return
    // Chromium also logs every 4xx/5xx answer and failed request as a console error; those are
    // judged below from the answer itself (so an expected answer is not counted as an error).
    if (message.text().startsWith('Failed to load resource')) return
    problems.push(`${screen}: console error: ${message.text()}`)
  })
  page.on('pageerror', error => problems.push(`${screen}: page error: ${error.message}`))
  page.on('requestfailed', (request) => {
    // A request the browser dropped because the page moved on is not a failure of the page.
    if (request.failure()?.errorText === 'net::ERR_ABORTED') return
    problems.push(`${screen}: request failed: ${request.method()} ${request.url()} ${request.failure()?.errorText}`)
  })
  page.on('response', (response) => {
    if (!response.url().startsWith(base) || response.status() < 400) return
    if (expectedAnswer(who, response.request().method(), new URL(response.url()), response.status())) return
    problems.push(`${screen}: ${response.status()} for ${response.request().method()} ${response.url().slice(base.length)}`)
  })
  return { problems, at: (name: string) => (screen = name) }
}

/** Opens a screen the way a person arrives at it, and waits until it has settled. */
async function open(page: Page, path: string) {
  await page.goto(path)
  await waitForHydration(page)
  await page.locator('h1').first().waitFor()
  await page.waitForLoadState('networkidle')
}

describe.each(TABLET_VIEWPORTS)('every screen at $name', (viewport) => {
  it.each(VISITORS)('%s', async (who) => {
    const { context, page } = await openContext(browser, server.url, viewport)
    const watch = watchProblems(page, server.url, who)
    const axe: string[] = []
    const landed: string[] = []
    const sideways: string[] = []
    try {
      if (who !== 'signed-out') {
        const login = await context.request.post('/api/auth/login', { data: { email: DEMO[who], password: DEMO_PASSWORD } })
        expect(login.status()).toBe(200)
      }
      // Ids no tablet of this visitor holds, for the runners it may not open anyway.
      const tablet = { tabletLessonId: randomUUID(), tabletCheckId: randomUUID() }
      if (who === 'admin' || who === 'coach') {
        // A coach's tablet: the first visit downloads the data; lessons and checks start from it.
        watch.at('(setup: Today downloads the tablet data)')
        await open(page, '/')
        await page.getByText(/Breakdowns on this tablet: [1-9]/).waitFor({ timeout: 60_000 })
        watch.at('(setup: a lesson started)')
        tablet.tabletLessonId = await startLesson(page)
        watch.at('(setup: a spot check started)')
        tablet.tabletCheckId = await startCheck(page)
      }
      const walkIds: WalkIds = { ...ids, ...tablet }

      for (const screen of SCREENS.filter(s => s.visitors.includes(who))) {
        const name = screenName(screen)
        const path = screen.path(walkIds, who)
        watch.at(`${name} (${path})`)
        await open(page, path)
        const at = new URL(page.url())
        if (at.pathname !== new URL(path, server.url).pathname) landed.push(`${path} went to ${at.pathname}`)
        if (!A4_SHEETS.has(screen.route) && await overflowsSideways(page)) sideways.push(path)
        await page.screenshot({ path: `${SHOTS}/${viewport.width}x${viewport.height}-${who}-${name}.png`, fullPage: true })
        for (const v of await axeViolations(page)) axe.push(`${path}: ${v.id} (${v.impact}) ${v.help} — ${v.nodes.join(', ')}`)
      }

      // The pages this visitor may not open send them to Today (signed in) or to sign-in.
      if (viewport === TABLET_LANDSCAPE) {
        for (const screen of SCREENS.filter(s => !s.visitors.includes(who) && (who !== 'signed-out' ? !s.visitors.includes('signed-out') : true))) {
          const path = screen.path(walkIds, who)
          watch.at(`${screenName(screen)} (${path}, not for ${who})`)
          await page.goto(path)
          await waitForHydration(page)
          const expected = who === 'signed-out' ? '/sign-in' : '/'
          await page.waitForURL(url => url.pathname === expected)
          await page.waitForLoadState('networkidle')
        }
      }
    }
    finally {
      await context.close()
    }
    expect(landed, 'screens that sent this visitor elsewhere').toEqual([])
    expect(sideways, 'screens wider than the tablet (a sideways scroll)').toEqual([])
    expect(axe, 'axe-core violations').toEqual([])
    expect(watch.problems, 'console errors and failed requests').toEqual([])
  }, 300_000)
})
