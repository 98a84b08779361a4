// The people pages and a learner's own study view in real Chromium at both tablet shapes.
// A coach opens People (the roster with each learner's state in words) and a learner's page: the
// recall chart (drawn on a canvas, with its summary and table), upcoming checks with how late they
// are, re-teach with why. Then the learner signs in, follows "My training" from Today, studies the
// cards with their photos, goes offline, reloads, and still studies them. axe-core (WCAG 2.2 AA)
// on every screen; screenshots into /tmp (people-*.png, study-*.png).
import sharp from 'sharp'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { PASSWORD, addMember, signUp } from '../support/accounts'
import { TABLET_VIEWPORTS, launchBrowser, openContext, overflowsSideways, routerPush, smallTargets, visit, waitForHydration, type Viewport } from '../support/browser'
import { photoForm } from '../support/photos'
import { startServer, type TestServer } from '../support/server'
import { linkedLearner, spotCheck, teach, type Taught } from '../support/people'
import type { Client } from '../support/http'
import type { BreakdownContent } from '../../shared/schemas/breakdown'
import { randomUUID } from 'node:crypto'
import { axeViolations } from '../support/axe'

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

/** An invented 800 × 600 picture in shapes (a blade set on a bench), so a card shows a real-sized photo. */
async function picture(fill: string): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="800" height="600">
    <rect width="800" height="600" fill="#d8c3a0"/>
    <circle cx="400" cy="300" r="200" fill="${fill}"/>
    <circle cx="400" cy="300" r="60" fill="#5a6470"/>
  </svg>`
  return sharp(Buffer.from(svg)).png().toBuffer()
}

async function upload(admin: Client, fill: string): Promise<string> {
  const res = await admin.request('POST', '/api/uploads', photoForm(await picture(fill)))
  if (res.status !== 201) throw new Error(`upload: ${res.status} ${res.text}`)
  return res.body.id as string
}

async function job(admin: Client, title: string, content: BreakdownContent): Promise<Omit<Taught, 'learnerId'>> {
  const created = await admin.post('/api/jobs', { title, hazards: [{ category: 'sharp-edges', description: 'Blade set' }], ppe: ['Cut-resistant gloves'], toolsAndMaterials: ['Padlock and tag'], purpose: 'Clean slices, no torn loaves' })
  const draft = await admin.post(`/api/jobs/${created.body.id}/versions`)
  await admin.patch(`/api/versions/${draft.body.id}`, { revision: 0, content })
  const published = await admin.post(`/api/versions/${draft.body.id}/publish`, { changeNote: 'First version.' })
  if (published.status !== 200) throw new Error(`publish: ${published.status} ${published.text}`)
  return { jobId: created.body.id as string, versionId: draft.body.id as string, content }
}

function breakdown(stepPhoto: string | null, keyPointPhoto: string | null): BreakdownContent {
  return {
    units: [{
      id: randomUUID(),
      title: '',
      steps: [
        { id: randomUUID(), text: 'Stop and lock out the slicer', photoId: stepPhoto, keyPoints: [{ id: randomUUID(), kind: 'safety', text: 'Own padlock on the isolator', reason: 'Nobody else can start the drive', photoId: null }] },
        { id: randomUUID(), text: 'Open the blade guard', photoId: null, keyPoints: [{ id: randomUUID(), kind: 'knack', text: 'Lift both latches together', reason: 'One latch alone jams the guard', photoId: keyPointPhoto }] },
        { id: randomUUID(), text: 'Fit the new blade set', photoId: null, keyPoints: [{ id: randomUUID(), kind: 'quality', text: 'Seat both frame pins', reason: 'A half-seated set tears loaves', photoId: null }] },
      ],
    }],
  }
}

/** A bakery with a coach and Ilse (who signs in): the slicer taught twice, the sealer failed a check, the weigher taught today. */
async function bakery(label: string) {
  const admin = await signUp(server, `Hollowmere Bakery ${label}`)
  const coach = await addMember(server, admin.client, 'coach')
  const ilse = await linkedLearner(server, admin.client, 'Ilse Brannagh')
  await admin.client.post('/api/learners', { name: 'Tomas Feld', reference: 'HB-12' })
  const mirela = await linkedLearner(server, admin.client, 'Mirela Dunn')
  const photos = [await upload(admin.client, '#b3372a'), await upload(admin.client, '#2f5b8f')]
  const slicer = { learnerId: ilse.learnerId, ...(await job(admin.client, 'Change the slicer blade set', breakdown(photos[0]!, photos[1]!))) }
  const sealer = { learnerId: ilse.learnerId, ...(await job(admin.client, 'Thread film on the bag sealer', breakdown(null, null))) }
  const weigher = { learnerId: ilse.learnerId, ...(await job(admin.client, 'Check-weigh a tray', breakdown(null, null))) }
  const kps = slicer.content.units[0]!.steps.map(s => s.keyPoints[0]!.id)
  await teach(coach, slicer, { daysAgo: 20, decision: 'another-pass', cued: [kps[0]!, kps[1]!] })
  await teach(coach, slicer, { daysAgo: 12, cued: [kps[2]!] })
  const sealed = await teach(coach, sealer, { daysAgo: 10 })
  await spotCheck(coach, sealer, { daysAgo: 3, lessonId: sealed.lessonId, marks: { [sealer.content.units[0]!.steps[0]!.keyPoints[0]!.id]: 'missed' } })
  await teach(coach, weigher, { daysAgo: 0 })
  return { admin, coach, ilse, mirela, photos, slicer }
}

async function expectScreen(page: Page, viewport: Viewport, name: string) {
  await page.screenshot({ path: `/tmp/${name}-${viewport.width}x${viewport.height}.png`, fullPage: true })
  expect(await axeViolations(page), `axe on ${name}`).toEqual([])
  const { problems } = await smallTargets(page, 44)
  expect(problems, `targets under 44 px on ${name}`).toEqual([])
  expect(await overflowsSideways(page), `sideways scroll on ${name}`).toBe(false)
}

async function signIn(page: Page, email: string) {
  await visit(page, '/sign-in')
  await page.getByLabel('E-mail address').fill(email)
  await page.getByLabel('Password').fill(PASSWORD)
  await page.getByRole('button', { name: 'Sign in' }).click()
  await page.waitForURL(url => url.pathname === '/')
  await waitForHydration(page)
}

/** A string only chart.js's registry carries (its error for an unregistered chart part). */
const CHART_JS_MARK = 'is not a registered'

/** The scripts this page has loaded whose text holds `mark`. */
async function scriptsWith(page: Page, mark: string): Promise<string[]> {
  const urls = await page.evaluate(() => performance.getEntriesByType('resource').map(e => e.name).filter(n => new URL(n).pathname.endsWith('.js')))
  const found: string[] = []
  for (const url of new Set(urls)) {
    const res = await page.request.get(url)
    if ((await res.text()).includes(mark)) found.push(new URL(url).pathname)
  }
  return found
}

/** Whether every study photo on screen has been drawn from real image data. */
const photosDrawn = (page: Page) => page.locator('[data-testid="study-photo"]').evaluateAll(imgs => imgs.map(i => (i as HTMLImageElement).complete && (i as HTMLImageElement).naturalWidth > 0 && (i as HTMLImageElement).src.startsWith('blob:')))

describe.each(TABLET_VIEWPORTS)('people and study at $name', (viewport) => {
  it('a coach sees the roster, the learner\'s chart, upcoming checks and re-teach', async () => {
    const { coach, ilse } = await bakery(`people ${viewport.width}`)
    const { context, page, pageErrors } = await openContext(browser, server.url, viewport)
    try {
      await signIn(page, coach.email)
      await visit(page, '/people')
      const row = page.locator('[data-learner="Ilse Brannagh"]')
      const words = await row.getByTestId('learner-state').innerText()
      expect(words).toContain('Re-teach 1 job')
      expect(words).toContain('1 spot check overdue')
      expect(words).toContain('Ready for 2 jobs')
      expect(await page.locator('[data-learner="Tomas Feld"]').innerText()).toContain('Nothing planned yet')
      await expectScreen(page, viewport, 'people-roster')

      // Adding a learner keeps working from the roster.
      await page.getByTestId('add-learner').getByLabel('Name').fill('Ottilie Varga')
      await page.getByRole('button', { name: 'Add to the roster' }).click()
      await expect.poll(() => page.locator('[data-learner="Ottilie Varga"]').count()).toBe(1)

      await row.getByRole('link', { name: 'Ilse Brannagh' }).click()
      await page.waitForURL(url => url.pathname === `/people/${ilse.learnerId}`)
      await waitForHydration(page)
      // The chart is drawn (chart.js paints the canvas) and has its words beside it.
      const canvas = page.getByTestId('recall-chart').locator('canvas')
      await expect.poll(() => canvas.count()).toBe(1)
      await expect.poll(() => canvas.evaluate(c => (c as HTMLCanvasElement).width)).toBeGreaterThan(200)
      expect(await canvas.getAttribute('role')).toBe('img')
      expect(await canvas.getAttribute('aria-label')).toContain('Change the slicer blade set: from 88.9')
      expect(await page.getByTestId('recall-summary').innerText()).toContain('to 94.4')
      expect(await page.getByTestId('recall-table').locator('tbody tr').count()).toBe(4)

      const upcoming = page.getByTestId('upcoming-checks')
      expect(await upcoming.locator('[data-job="Change the slicer blade set"]').innerText()).toContain('11 days late')
      expect(await upcoming.locator('[data-job="Check-weigh a tray"]').innerText()).toContain('Due tomorrow')
      expect(await page.getByTestId('jobs-reteach').innerText()).toContain('asked for re-teaching')
      expect(await page.getByTestId('check-history').innerText()).toContain('Re-teach needed')
      expect(await page.getByTestId('lesson-history').getByRole('link', { name: /^Review/ }).count()).toBe(4)
      await expectScreen(page, viewport, 'people-learner')

      // chart.js is loaded by this page only: the lesson runner's start screen and the roster never load it.
      const chartChunks = await scriptsWith(page, CHART_JS_MARK)
      expect(chartChunks).toHaveLength(1)
      for (const path of ['/lessons/new', '/people']) {
        await visit(page, path)
        expect(await scriptsWith(page, CHART_JS_MARK), path).toEqual([])
      }
      expect(pageErrors).toEqual([])
    }
    finally {
      await context.close()
    }
  })

  it('a learner studies the cards with photos, and still can offline after a reload', async () => {
    const { ilse, mirela, photos, slicer } = await bakery(`study ${viewport.width}`)
    const { context, page, pageErrors } = await openContext(browser, server.url, viewport, { serviceWorkers: 'allow' })
    try {
      await signIn(page, ilse.email)
      await page.waitForFunction(() => navigator.serviceWorker.controller !== null, undefined, { timeout: 60_000 })
      const today = page.getByTestId('today-study')
      expect(await today.innerText()).toContain('My training')
      await expectScreen(page, viewport, 'study-today')
      await today.getByRole('link', { name: 'Open my training' }).click()
      await page.waitForURL(url => url.pathname === '/study')
      await expect.poll(() => page.getByTestId('study-breakdowns').innerText()).toContain('Change the slicer blade set')
      expect(await page.getByTestId('study-breakdowns').locator('li').count()).toBe(3)
      await expect.poll(() => page.getByTestId('study-photos').innerText(), { timeout: 20_000 }).toBe('All 2 photos are kept on this device.')
      expect(await page.getByTestId('upcoming-checks').innerText()).toContain('Due tomorrow')
      await expectScreen(page, viewport, 'study-overview')

      await page.getByTestId('study-breakdowns').getByRole('link', { name: 'Change the slicer blade set', exact: true }).click()
      await page.waitForURL(url => url.pathname === `/study/${slicer.versionId}`)
      const card = page.getByTestId('study-card')
      await expect.poll(() => card.innerText()).toContain('Stop and lock out the slicer')
      expect(await card.innerText()).toContain('Important step 1 of 3')
      expect(await card.locator('[data-kind="safety"]').innerText()).toContain('Safety')
      expect(await card.innerText()).toContain('Why: Nobody else can start the drive')
      await expect.poll(() => photosDrawn(page)).toEqual([true])
      await expectScreen(page, viewport, 'study-card')

      // Network off; reload on the second step: the shell answers and the cards come from the device.
      await context.setOffline(true)
      await page.getByTestId('next-step').click()
      await page.waitForURL(url => url.searchParams.get('step') === '2')
      await page.reload()
      await waitForHydration(page)
      await expect.poll(() => page.getByTestId('offline-banner').innerText()).toContain('No connection.')
      await expect.poll(() => card.innerText(), { timeout: 15_000 }).toContain('Open the blade guard')
      expect(await card.innerText()).toContain('Knack')
      expect(await card.innerText()).toContain('Why: One latch alone jams the guard')
      await expect.poll(() => photosDrawn(page)).toEqual([true])
      await expectScreen(page, viewport, 'study-card-offline')

      // Back to the overview, still offline: the records come from the device too.
      await page.getByRole('link', { name: '← My training' }).click()
      await page.waitForURL(url => url.pathname === '/study')
      await expect.poll(() => page.getByTestId('study-from-device').innerText()).toContain('Shown from this device')
      expect(await page.getByTestId('lesson-history').innerText()).toContain('Ready to work alone')
      expect(await page.getByTestId('check-history').innerText()).toContain('Re-teach needed')
      await expectScreen(page, viewport, 'study-overview-offline')
      expect(photos).toHaveLength(2)

      // Back online, Ilse signs out and Mirela signs in on the same tab: none of Ilse's training shows.
      await context.setOffline(false)
      await expect.poll(() => page.getByTestId('offline-banner').count(), { timeout: 15_000 }).toBe(0)
      await page.getByRole('button', { name: 'Sign out' }).click()
      await page.waitForURL(url => url.pathname === '/sign-in')
      await waitForHydration(page)
      await page.getByLabel('E-mail address').fill(mirela.email)
      await page.getByLabel('Password').fill(PASSWORD)
      await page.getByRole('button', { name: 'Sign in' }).click()
      await page.waitForURL(url => url.pathname === '/')
      await routerPush(page, `/study/${slicer.versionId}`)
      await expect.poll(() => page.getByRole('heading', { level: 1 }).innerText()).toBe('Not among your breakdowns')
      await routerPush(page, '/study')
      await expect.poll(() => page.getByTestId('study-breakdowns').innerText()).toContain('No breakdowns yet')
      expect(await page.locator('body').innerText()).not.toContain('Change the slicer blade set')
      expect(pageErrors).toEqual([])
    }
    finally {
      await context.close()
    }
  })
})
