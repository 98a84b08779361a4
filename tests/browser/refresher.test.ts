// A refresher after a new version, in real Chromium at both tablet shapes: the job page lists the
// learner trained on v1 with what changed in v2; "Start refresher" (tapped with the network off,
// after one online visit) opens the start screen with the changed ids from the tablet's copy; the
// runner presents and tries out only the changed elements; back online the lesson syncs and the
// flag clears. axe-core on the job page section, the start screen and the runner; screenshots in /tmp.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { PASSWORD, addMember, signUp } from '../support/accounts'
import { cleanTryout, publishedJob, rosterLearner, slicerContent } from '../support/breakdowns'
import { addToolScript, idbRows, launchBrowser, openContext, overflowsSideways, smallTargets, TABLET_VIEWPORTS, visit, waitForHydration, type Viewport } from '../support/browser'
import { startServer, type TestServer } from '../support/server'
import type { BreakdownContent } from '../../shared/schemas/breakdown'

let server: TestServer
let browser: Browser

beforeAll(async () => {
  server = await startServer()
  browser = await launchBrowser()
})

afterAll(async () => {
  await browser?.close()
  await server?.stop()
})

/** v1 published, a learner signed off ready on it (pushed as a tablet would), then v2 with a reworded step and a new safety key point. */
async function setUp(label: string) {
  const admin = await signUp(server, `Harbour Bakery ${label}`)
  const coach = await addMember(server, admin.client, 'coach')
  const v1 = await publishedJob(admin.client, slicerContent())
  const learnerId = await rosterLearner(coach.client, 'Ilse Brannagh')
  const lessonId = randomUUID()
  const deviceId = randomUUID()
  // Taught three days ago (so the page says a real date).
  const startedAt = Date.now() - 3 * 86_400_000
  const signedOffAt = startedAt + 3_600_000
  const pushed = await coach.client.post('/api/sync', {
    deviceId,
    lessons: [{ id: lessonId, coachUserId: coach.userId, learnerId, jobId: v1.jobId, versionId: v1.versionId, place: 'Slicer 2', startedAt, updatedAt: signedOffAt, decision: 'ready', signedOffAt }],
    events: cleanTryout(lessonId, deviceId, v1.content, 1, startedAt),
    checks: [],
  })
  if (pushed.status !== 200 || pushed.body.rejected.length) throw new Error(`sync: ${pushed.status} ${pushed.text}`)

  const draft = await admin.client.post(`/api/jobs/${v1.jobId}/versions`)
  const read = await admin.client.get(`/api/versions/${draft.body.id}`)
  const content = structuredClone(read.body.content) as BreakdownContent
  const steps = content.units[0]!.steps
  steps[1]!.text = 'Swing the blade guard fully open'
  const newKeyPoint = { id: randomUUID(), kind: 'safety' as const, text: 'Cut-resistant gloves on both hands', reason: 'The blade edges cut through bare skin', photoId: null }
  steps[2]!.keyPoints.push(newKeyPoint)
  const saved = await admin.client.patch(`/api/versions/${draft.body.id}`, { revision: read.body.revision, content })
  if (saved.status !== 200) throw new Error(`save: ${saved.status} ${saved.text}`)
  const published = await admin.client.post(`/api/versions/${draft.body.id}/publish`, { changeNote: 'Guard opened fully; gloves for the blade set.' })
  if (published.status !== 200) throw new Error(`publish: ${published.status} ${published.text}`)
  return { coach, jobId: v1.jobId, learnerId, v2Id: draft.body.id as string, focus: [steps[1]!.id, newKeyPoint.id] }
}

async function axeViolations(page: Page, include?: string) {
  await page.evaluate(() => Promise.all(document.getAnimations().map(a => a.finished.catch(() => undefined))))
  if (!(await page.evaluate(() => 'axe' in window))) await addToolScript(page, 'node_modules/axe-core/axe.min.js')
  return page.evaluate(async (selector) => {
    const axe = (window as unknown as { axe: { run: (ctx: unknown, o: object) => Promise<{ violations: Array<{ id: string, impact: string, help: string, nodes: Array<{ target: string[] }> }> }> } }).axe
    const result = await axe.run(selector ? { include: [selector] } : document, { runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa', 'wcag22aa'] } })
    return result.violations.map(v => ({ id: v.id, impact: v.impact, help: v.help, nodes: v.nodes.slice(0, 5).map(n => n.target.join(' ')) }))
  }, include ?? null)
}

const shot = (v: Viewport, name: string) => `/tmp/refresher-${v.width}x${v.height}-${name}.png`

// Targets: 48 px in the full-screen runner, 44 px on pages with the site's header (DEVELOPERS.md, UI).
async function expectScreen(page: Page, viewport: Viewport, name: string, options: { include?: string, minTarget?: number, fullPage?: boolean } = {}) {
  const { include, minTarget = 48, fullPage = false } = options
  // Full page only where nothing is sticky: a sticky bar is drawn mid-page in a full-page picture.
  await page.screenshot({ path: shot(viewport, name), fullPage })
  expect(await axeViolations(page), `axe on ${name}`).toEqual([])
  if (include) expect(await axeViolations(page, include), `axe on ${name} (${include})`).toEqual([])
  const { problems } = await smallTargets(page, minTarget)
  expect(problems, `targets under ${minTarget} px on ${name}`).toEqual([])
  expect(await overflowsSideways(page), `sideways scroll on ${name}`).toBe(false)
}

const cursorOf = (page: Page) => page.locator('main#main').evaluate(el => ({ stage: el.getAttribute('data-stage'), pass: el.getAttribute('data-pass'), index: Number(el.getAttribute('data-index')) }))

async function waitForCursor(page: Page, pass: string, index: number) {
  await expect.poll(() => cursorOf(page)).toMatchObject({ pass, index })
}

/** The texts of a pass's cards, read by stepping through them with Next. */
async function cardTexts(page: Page, count: number): Promise<string[]> {
  const texts: string[] = []
  for (let i = 0; i < count; i++) {
    await page.locator(`[data-strip="${i}"]`).click()
    await expect.poll(() => cursorOf(page)).toMatchObject({ index: i })
    texts.push(await page.getByTestId('card-text').innerText())
  }
  await page.locator('[data-strip="0"]').click()
  return texts
}

async function markAll(page: Page, pass: string, count: number) {
  await waitForCursor(page, pass, 0)
  expect(await page.locator('[data-strip]').count(), `cards in ${pass}`).toBe(count)
  for (let i = 0; i < count; i++) {
    await page.locator('[data-mark="unaided"]').click()
    await expect.poll(() => page.locator(`[data-strip="${i}"]`).innerText()).toContain('Unaided')
    await waitForCursor(page, pass, i === count - 1 ? i : i + 1)
  }
  await page.locator('[data-action="close-pass"]').click()
}

describe.each(TABLET_VIEWPORTS)('refresher at $name', (viewport) => {
  it('lists the learner on the job page, runs a refresher of only what changed (started offline), and clears the flag after sync', async () => {
    const setup = await setUp(`${viewport.width}x${viewport.height}`)
    const { context, page, pageErrors } = await openContext(browser, server.url, viewport, { serviceWorkers: 'allow' })
    try {
      const login = await context.request.post('/api/auth/login', { data: { email: setup.coach.email, password: PASSWORD } })
      expect(login.status()).toBe(200)
      // The first online visit fills the tablet: the current version and who needs a refresher.
      await visit(page, '/')
      await expect.poll(async () => (await idbRows<{ id: string }>(page, 'versions')).map(v => v.id), { timeout: 20_000 }).toEqual([setup.v2Id])
      await expect.poll(async () => (await idbRows<{ key: string, value: { entries: Array<{ learnerId: string, focus: string[] }> } }>(page, 'meta'))
        .find(m => m.key.startsWith('refreshers:'))?.value.entries.map(e => [e.learnerId, e.focus])).toEqual([[setup.learnerId, setup.focus]])
      await page.evaluate(() => navigator.serviceWorker.ready)
      await expect.poll(() => page.evaluate(() => Boolean(navigator.serviceWorker.controller))).toBe(true)

      // Straight after publishing, the version page says how many are flagged (the editor adds these to the address).
      await visit(page, `/versions/${setup.v2Id}?published=1&flagged=1`)
      expect(await page.getByTestId('published-flagged').innerText()).toBe('Published v2. 1 person trained on an older version is now flagged for a refresher.')
      await expectScreen(page, viewport, '0-published', { minTarget: 44 })

      // The job page: who was trained on an older version, and what changed.
      await visit(page, `/jobs/${setup.jobId}`)
      const section = page.getByTestId('retraining')
      await expect.poll(() => section.getByTestId('retraining-person').count()).toBe(1)
      const person = section.getByTestId('retraining-person')
      expect(await person.innerText()).toContain('Ilse Brannagh')
      expect(await person.innerText()).toContain('Re-teach: trained on v1')
      expect(await person.getByTestId('retraining-changes').locator('li').allInnerTexts()).toEqual([
        'Step 2 reworded: “Swing the blade guard fully open”',
        'New safety key point on step 3: “Cut-resistant gloves on both hands”',
      ])
      await section.scrollIntoViewIfNeeded()
      await page.screenshot({ path: shot(viewport, '1-job-section'), clip: (await section.boundingBox())! })
      await expectScreen(page, viewport, '1-job-page', { include: '[data-testid="retraining"]', minTarget: 44, fullPage: true })

      // The network goes; the refresher still starts, from what the tablet holds.
      await context.setOffline(true)
      await person.getByTestId('start-refresher').click()
      await page.waitForURL(url => url.pathname === '/lessons/new')
      const choice = page.getByTestId('refresher-choice')
      await expect.poll(() => choice.isVisible()).toBe(true)
      expect(await page.getByTestId('kind-refresher').isChecked()).toBe(true)
      expect(await choice.innerText()).toContain('Presents and tries out 2 steps and 2 key points')
      await expectScreen(page, viewport, '2-start', { minTarget: 44 })
      await page.getByRole('button', { name: 'Start the refresher' }).click()
      await page.waitForURL(url => /^\/lessons\/[0-9a-f-]{36}$/.test(url.pathname))
      await waitForHydration(page)
      const lessonId = new URL(page.url()).pathname.split('/').pop()!

      // The runner says plainly what it is, on every stage.
      expect(await page.getByTestId('refresher-banner').innerText()).toBe('Refresher: only what changed in version 2')
      // Prepare: what changed, to tell the learner first (from the tablet's copy, offline).
      await expect.poll(() => page.getByTestId('refresher-changes').locator('li').allInnerTexts()).toEqual([
        'Step 2 reworded: “Swing the blade guard fully open”',
        'New safety key point on step 3: “Cut-resistant gloves on both hands”',
      ])
      await expectScreen(page, viewport, '3-prepare')
      await page.locator('[data-action="to-present"]').click()
      await expect.poll(() => cursorOf(page)).toMatchObject({ stage: 'present', pass: '' })
      await page.locator('[data-action="start-pass"]').click()
      await waitForCursor(page, 'P1-1', 0)
      // Present: only the two steps holding a change, in the new version's order.
      expect(await page.locator('[data-strip]').count()).toBe(2)
      expect(await cardTexts(page, 2)).toEqual(['Swing the blade guard fully open', 'Fit the new blade set'])
      // Numbered as in the breakdown (and the change list), not as in the refresher.
      expect(await page.locator('article.lesson-card').innerText()).toContain('Important step 2 of 3')
      await expectScreen(page, viewport, '4-present-P1')
      for (let i = 0; i < 2; i++) {
        await page.locator('[data-action="presented"]').click()
        await expect.poll(() => page.locator(`[data-strip="${i}"]`).innerText()).toContain('Presented')
      }
      await page.locator('[data-action="close-pass"]').click()
      await page.locator('[data-stage="tryout"]').click()

      // Try-out: T1 and T2 the two steps, T3 and T4 the reworded step's key point and the new safety key point.
      await expect.poll(() => cursorOf(page)).toMatchObject({ stage: 'tryout', pass: '' })
      await page.locator('[data-action="start-pass"]').click()
      await markAll(page, 'T1-1', 2)
      await waitForCursor(page, 'T2-1', 0)
      await page.locator('[data-action="all-in-order"]').click()
      await expect.poll(() => page.getByTestId('order-score').innerText()).toBe('Order score 100 — 2 of 2 named')
      await markAll(page, 'T2-1', 2)
      await waitForCursor(page, 'T3-1', 0)
      expect(await cardTexts(page, 2)).toEqual(['Lift both latches together', 'Cut-resistant gloves on both hands'])
      await expectScreen(page, viewport, '5-tryout-T3')
      await markAll(page, 'T3-1', 2)
      await markAll(page, 'T4-1', 2)
      await expect.poll(() => cursorOf(page)).toMatchObject({ stage: 'tryout', pass: '' })
      await expect.poll(() => page.getByTestId('tryout-suggestion').innerText()).toContain('ready to work alone')
      await page.locator('[data-action="to-followup"]').click()

      // Follow up: ready, acknowledged, signed off.
      expect(await page.getByTestId('recall-score').innerText()).toBe('100')
      await page.locator('[data-decision="ready"]').click()
      await expect.poll(() => page.locator('[data-decision="ready"]').getAttribute('aria-pressed')).toBe('true')
      await page.getByLabel('The learner\'s name, typed by the learner').fill('Ilse Brannagh')
      await page.locator('[data-action="save-ack"]').click()
      await expect.poll(() => page.getByTestId('acknowledged').innerText()).toContain('Acknowledged by Ilse Brannagh')
      await page.locator('[data-action="sign-off"]').click()
      await page.locator('[data-action="confirm-sign-off"]').click()
      await expect.poll(() => page.getByTestId('signed-off').isVisible()).toBe(true)
      await expectScreen(page, viewport, '6-followup-signed-off')
      const [lesson] = (await idbRows<{ id: string, focus: string[] | null, versionId: string }>(page, 'lessons')).filter(l => l.id === lessonId)
      expect(lesson).toMatchObject({ versionId: setup.v2Id, focus: setup.focus })
      // Still offline, the start screen no longer offers a refresher: the tablet's own lesson says it is done.
      await visit(page, `/lessons/new?learner=${setup.learnerId}&job=${setup.jobId}&refresher=1`)
      await expect.poll(() => page.getByTestId('no-refresher').isVisible()).toBe(true)
      expect(await page.getByTestId('refresher-choice').count()).toBe(0)

      // Back online: the lesson goes to the server, scored on the same focused elements, and the flag clears.
      await visit(page, '/')
      await expect.poll(() => page.getByTestId('sync-waiting').innerText()).toMatch(/^Waiting to send/)
      await context.setOffline(false)
      await expect.poll(() => page.getByTestId('sync-waiting').innerText(), { timeout: 20_000 }).toBe('Nothing waiting: everything on this tablet is on the server.')
      const review = await setup.coach.client.get(`/api/lessons/${lessonId}`)
      expect(review.body.score).toMatchObject({ recall: 100, readiness: 'ready' })
      expect((await setup.coach.client.get(`/api/jobs/${setup.jobId}/retraining`)).body.people).toEqual([])
      await visit(page, `/jobs/${setup.jobId}`)
      expect(await page.getByTestId('retraining').count()).toBe(0)
      expect(pageErrors).toEqual([])
    }
    finally {
      await context.close()
    }
  }, 240_000)
})
