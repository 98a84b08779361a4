// A spot check in real Chromium at both tablet shapes (issue 6 item 2): the coach opens Today once
// online (the tablet pulls the breakdown, the roster and the checks due), goes offline, starts the
// late check from Today, fails the safety key point, reloads in the middle and resumes, undoes a
// mark, finishes and reads the outcome in words; back online the check syncs and the server says
// re-teach. axe-core (WCAG 2.2 AA rules) on each screen; screenshots into /tmp.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { PASSWORD, addMember, signUp } from '../support/accounts'
import { idbRows, launchBrowser, openContext, overflowsSideways, smallTargets, TABLET_VIEWPORTS, visit, waitForHydration, type Viewport } from '../support/browser'
import { cleanTryout, publishedJob, rosterLearner } from '../support/breakdowns'
import { startServer, type TestServer } from '../support/server'
import type { BreakdownContent } from '../../shared/schemas/breakdown'
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

/** Invented for the test (our demo bakery): a safety key point with its reason, and a few others. */
function sealerBreakdown(): BreakdownContent {
  const kp = (kind: 'quality' | 'safety' | 'knack', text: string, reason: string) => ({ id: randomUUID(), kind, text, reason, photoId: null })
  return {
    units: [{
      id: randomUUID(),
      title: '',
      steps: [
        { id: randomUUID(), text: 'Switch off and let the jaws cool', photoId: null, keyPoints: [kp('safety', 'Wait for the jaw light to go out', 'The jaws stay hot enough to burn for minutes')] },
        { id: randomUUID(), text: 'Thread the film over the dancer roll', photoId: null, keyPoints: [kp('knack', 'Keep the print side facing you', 'It is the side that ends up outside the bag')] },
        { id: randomUUID(), text: 'Splice onto the old film end', photoId: null, keyPoints: [kp('quality', 'Overlap the tape by two fingers', 'A short splice tears in the jaws')] },
        { id: randomUUID(), text: 'Run three empty bags', photoId: null, keyPoints: [] },
      ],
    }],
  }
}

async function expectScreen(page: Page, viewport: Viewport, name: string) {
  expect(await axeViolations(page), `axe on ${name}`).toEqual([])
  expect((await smallTargets(page, 44)).problems, `targets on ${name}`).toEqual([])
  expect(await overflowsSideways(page), `sideways scroll on ${name}`).toBe(false)
  await page.screenshot({ path: `/tmp/spot-check-${viewport.width}x${viewport.height}-${name}.png`, fullPage: true })
}

interface IdbCheckEvent { id: string, checkId: string, elementId: string | null, kind: string, value: string | null, seq: number, synced: number }

/** Taps a mark and waits until IndexedDB has it and the screen says so. */
async function mark(page: Page, value: 'unaided' | 'cued' | 'missed') {
  const before = (await idbRows<IdbCheckEvent>(page, 'checkEvents')).length
  const index = await page.getByTestId('check-runner').getAttribute('data-index')
  await page.locator(`[data-mark="${value}"]`).click()
  await expect.poll(async () => (await idbRows<IdbCheckEvent>(page, 'checkEvents')).length).toBe(before + 1)
  await expect.poll(() => page.locator(`[data-strip="${index}"]`).innerText()).toContain({ unaided: 'Unaided', cued: 'Cued', missed: 'Missed' }[value])
}

describe.each(TABLET_VIEWPORTS)('spot check at $name', (viewport) => {
  it('runs a late check from Today offline, fails the safety key point, resumes after a reload, and the server says re-teach', async () => {
    const size = `${viewport.width}x${viewport.height}`
    const admin = await signUp(server, `Hollowmere Bakery checks ${size}`)
    const coach = await addMember(server, admin.client, 'coach')
    const content = sealerBreakdown()
    const job = await publishedJob(admin.client, content, 'Thread film on the bag sealer')
    const learnerId = await rosterLearner(coach.client, 'Ilse Brannagh-Okafor')
    // Taught and signed off three days ago on another tablet: the first check (one day after) is two days late.
    const signedOffAt = Date.now() - 3 * 86_400_000
    const lessonId = randomUUID()
    const otherTablet = randomUUID()
    const taught = await coach.client.post('/api/sync', { deviceId: otherTablet, lessons: [{ id: lessonId, coachUserId: coach.userId, learnerId, jobId: job.jobId, versionId: job.versionId, startedAt: signedOffAt - 3_600_000, updatedAt: signedOffAt, decision: 'ready', signedOffAt }], events: cleanTryout(lessonId, otherTablet, content, 1, signedOffAt - 3_000_000), checks: [] })
    expect(taught.body.rejected).toEqual([])
    const safetyKp = content.units[0]!.steps[0]!.keyPoints[0]!.id

    const { context, page, pageErrors } = await openContext(browser, server.url, viewport, { serviceWorkers: 'allow' })
    try {
      // Online, once: sign in and open Today; the tablet takes the breakdown, roster and due checks.
      await visit(page, '/sign-in')
      await page.getByLabel('E-mail address').fill(coach.email)
      await page.getByLabel('Password').fill(PASSWORD)
      await page.getByRole('button', { name: 'Sign in' }).click()
      await page.waitForURL(url => url.pathname === '/')
      await waitForHydration(page)
      await page.waitForFunction(() => navigator.serviceWorker.controller !== null, undefined, { timeout: 60_000 })
      await expect.poll(async () => (await idbRows<{ id: string }>(page, 'versions')).map(v => v.id), { timeout: 30_000 }).toEqual([job.versionId])
      await expect.poll(async () => (await idbRows<{ key: string }>(page, 'dueChecks')).map(d => d.key), { timeout: 30_000 }).toEqual([`${learnerId}:${job.jobId}`])
      const checks = page.getByRole('region', { name: 'Spot checks due' })
      await expect.poll(() => checks.innerText()).toContain('Ilse Brannagh-Okafor')
      expect(await checks.innerText()).toContain('Spot check 2 days late')

      // Network off: Today opens from the shell and still lists the late check.
      await context.setOffline(true)
      await page.reload()
      await waitForHydration(page)
      await expect.poll(() => page.getByTestId('offline-banner').innerText()).toContain('No connection.')
      await expect.poll(() => checks.innerText()).toContain('Spot check 2 days late')
      await expectScreen(page, viewport, '1-today-offline')
      await checks.getByRole('link', { name: 'Start the spot check of Ilse Brannagh-Okafor: Thread film on the bag sealer' }).click()
      await page.waitForURL(url => url.pathname === '/checks/new')
      await expect.poll(() => page.getByTestId('check-version').innerText()).toContain('version 1 · 2 days late')
      // Suggested: the safety key point and its reason, plus a sample of three of the rest.
      await expect.poll(() => page.getByTestId('check-element-count').innerText()).toBe('5 elements chosen, 2 of them safety.')
      expect(await page.locator(`[data-check-element="${safetyKp}"] input`).isChecked()).toBe(true)
      expect(await page.locator(`[data-check-element="${safetyKp}:reason"] input`).isChecked()).toBe(true)
      // The coach adds one more element, then takes it away again.
      const extraId = await page.locator('[data-check-element]:has(input:not(:checked))').first().getAttribute('data-check-element')
      const extra = page.locator(`[data-check-element="${extraId}"] input`)
      await extra.check()
      await expect.poll(() => page.getByTestId('check-element-count').innerText()).toBe('6 elements chosen, 2 of them safety.')
      await extra.uncheck()
      await expect.poll(() => page.getByTestId('check-element-count').innerText()).toBe('5 elements chosen, 2 of them safety.')
      await expectScreen(page, viewport, '2-start')
      await page.getByRole('button', { name: 'Start the spot check' }).click()
      await page.waitForURL(url => /^\/checks\/[0-9a-f-]{36}$/.test(url.pathname))
      await waitForHydration(page)
      const checkId = new URL(page.url()).pathname.split('/').pop()!
      const [stored] = (await idbRows<{ id: string, elements: string[], lessonId: string | null, intervalIndex: number }>(page, 'checks')).filter(c => c.id === checkId)
      expect(stored).toMatchObject({ lessonId, intervalIndex: 0 })
      expect(stored!.elements).toHaveLength(5)

      // The runner: one element per card; the safety key point is missed, the rest unaided.
      await expect.poll(() => page.getByTestId('check-runner').getAttribute('data-index')).toBe('0')
      await expectScreen(page, viewport, '3-runner')
      const current = () => page.getByTestId('check-card').getAttribute('data-element')
      const valueFor = (id: string | null) => (id === safetyKp ? 'missed' : 'unaided')
      await mark(page, valueFor(await current()))
      await mark(page, valueFor(await current()))

      // Reload in the middle (still offline): the check resumes at the first unmarked element.
      await page.reload()
      await waitForHydration(page)
      await expect.poll(() => page.getByTestId('check-runner').getAttribute('data-index')).toBe('2')
      expect(await page.locator('[data-strip="0"]').innerText()).not.toContain('Not yet')
      expect(await page.locator('[data-strip="1"]').innerText()).not.toContain('Not yet')

      // A wrong tap taken back: Undo is a new event, and the element is unmarked again.
      await mark(page, 'cued')
      await page.locator('[data-action="undo"]').click()
      await expect.poll(async () => (await idbRows<IdbCheckEvent>(page, 'checkEvents')).filter(e => e.kind === 'undo')).toHaveLength(1)
      await expect.poll(() => page.getByTestId('check-runner').getAttribute('data-index')).toBe('2')
      await expect.poll(() => page.getByTestId('card-state').innerText()).toBe('Not marked yet')
      for (let i = 2; i < 5; i++) await mark(page, valueFor(await current()))
      await page.getByTestId('check-note').fill('Reached into the jaws before the light went out.')
      await page.getByTestId('check-note').blur()

      await page.locator('[data-action="finish"]').click()
      await expectScreen(page, viewport, '4-confirm')
      await page.locator('[data-action="confirm-finish"]').click()
      const outcome = page.getByTestId('check-outcome')
      await expect.poll(() => outcome.getAttribute('data-outcome')).toBe('reteach')
      expect(await outcome.innerText()).toContain('Re-teach this job')
      expect(await outcome.innerText()).toContain('a safety key point was missed (Wait for the jaw light to go out)')
      expect(await page.getByTestId('check-server-state').innerText()).toContain('Kept on this tablet')
      await expectScreen(page, viewport, '5-outcome')

      // Every mark is on the tablet, in one device sequence, waiting to be sent.
      const events = (await idbRows<IdbCheckEvent>(page, 'checkEvents')).filter(e => e.checkId === checkId)
      expect(events).toHaveLength(7)
      expect(events.every(e => e.synced === 0)).toBe(true)
      const seqs = events.map(e => e.seq).sort((a, b) => a - b)
      expect(new Set(seqs).size).toBe(seqs.length)

      // Back online: Today sends it, and the server's outcome comes back.
      await visit(page, '/')
      await context.setOffline(false)
      await expect.poll(() => page.getByTestId('sync-waiting').innerText(), { timeout: 30_000 }).toBe('Nothing waiting: everything on this tablet is on the server.')
      const finished = page.locator(`[data-check="${checkId}"]`)
      await expect.poll(() => finished.getByTestId('check-state').innerText(), { timeout: 30_000 }).toBe('On the server: Re-teach')
      await expect.poll(() => checks.innerText()).toContain('No spot checks due today.')
      await expectScreen(page, viewport, '6-today-synced')

      // The server computed the same outcome and flags the job for re-teaching.
      const pulled = await coach.client.get('/api/sync?since=0')
      expect(pulled.body.checks.find((c: { id: string }) => c.id === checkId)).toMatchObject({ finishedAt: expect.any(Number), note: 'Reached into the jaws before the light went out.', result: { outcome: 'reteach', nextIntervalIndex: 0 } })
      const plan = await coach.client.get('/api/plan')
      expect(plan.body.cells.find((c: { learnerId: string, jobId: string }) => c.learnerId === learnerId && c.jobId === job.jobId)).toMatchObject({ status: 'reteach', reteachBecause: 'failed-check' })
      expect(pageErrors).toEqual([])
    }
    finally {
      await context.close()
    }
  }, 240_000)
})
