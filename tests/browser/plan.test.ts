// The plan in real Chromium at both tablet shapes, on the demo bakery (npm run seed): the demo coach
// opens the plan, taps a learner × job cell, sets a target date and a reason (by touch in landscape,
// by keyboard in portrait), and the cell says "Planned by …"; the focus comes back to the cell.
// axe-core checks the screen and the open dialog (WCAG 2.2 AA rules); screenshots of the plan, the
// dialog and the print layout go to /tmp/fourfold-screens for a person to look at.
import { execFile } from 'node:child_process'
import { mkdir, mkdtemp, writeFile } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { promisify } from 'node:util'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { TABLET_LANDSCAPE, TABLET_PORTRAIT, launchBrowser, openContext, overflowsSideways, routerPush, smallTargets, visit, type Viewport } from '../support/browser'
import { startServer, type TestServer } from '../support/server'
import type { PlanMatrix } from '../../shared/types/plan-matrix'
import { dayStart, localDay, shortDate } from '../../shared/utils/training-status'
import { axeViolations } from '../support/axe'

const SHOTS = '/tmp/fourfold-screens'
const DEMO_PASSWORD = 'bakery-demo-2026'

let server: TestServer
let browser: Browser

beforeAll(async () => {
  // The demo organisation goes into the server's database file before the server starts.
  const dir = await mkdtemp(join(tmpdir(), 'fourfold-plan-'))
  await promisify(execFile)(process.execPath, ['scripts/seed.mjs'], { env: { ...process.env, DATABASE_URL: `file:${join(dir, 'fourfold.db')}`, DEMO_PASSWORD } })
  server = await startServer({ dir })
  browser = await launchBrowser()
  await mkdir(SHOTS, { recursive: true })
}, 120_000)

afterAll(async () => {
  await browser?.close()
  await server?.stop()
})

const shot = (page: Page, viewport: Viewport, name: string) => page.screenshot({ path: `${SHOTS}/plan-${viewport.width}x${viewport.height}-${name}.png` })

/** A learner × job of the demo with nothing planned or taught yet, different for each run. */
function freeCell(matrix: PlanMatrix, skip: Set<string>) {
  for (const learner of matrix.learners) {
    for (const job of matrix.jobs) {
      const key = `${learner.id}|${job.id}`
      if (skip.has(key) || matrix.cells.some(c => c.learnerId === learner.id && c.jobId === job.id)) continue
      skip.add(key)
      return { learner, job }
    }
  }
  throw new Error('The demo plan has no free cell left.')
}

describe('plan at tablet size', () => {
  const used = new Set<string>()

  it.each([
    { viewport: TABLET_LANDSCAPE, by: 'touch' as const },
    { viewport: TABLET_PORTRAIT, by: 'keyboard' as const },
  ])('the demo coach plans a learner for a job at $viewport.name by $by', async ({ viewport, by }) => {
    const { context, page, pageErrors } = await openContext(browser, server.url, viewport)
    try {
      const login = await context.request.post('/api/auth/login', { data: { email: 'coach@bakery.example', password: DEMO_PASSWORD } })
      expect(login.status()).toBe(200)
      const before = await (await context.request.get('/api/plan')).json() as PlanMatrix
      expect(before.learners.length).toBeGreaterThanOrEqual(5)
      expect(before.cells.some(c => c.status === 'late'), 'the demo plan has a late item').toBe(true)
      const { learner, job } = freeCell(before, used)

      await visit(page, '/plan')
      await page.getByTestId('plan-matrix').waitFor()
      await expect.poll(() => page.locator('[data-status="late"]').count()).toBeGreaterThan(0)
      await shot(page, viewport, '1-matrix')
      expect(await axeViolations(page), 'axe on the plan').toEqual([])
      expect(await overflowsSideways(page), 'the page itself never scrolls sideways').toBe(false)
      const targets = await smallTargets(page, 44)
      expect(targets.problems, 'targets under 44 px').toEqual([])
      // The coverage row says each job's coverage in words.
      expect(await page.getByTestId('plan-coverage-row').innerText()).toMatch(/\d+ of \d+ ready/)

      const cell = page.getByTestId(`plan-cell-${learner.id}-${job.id}`)
      expect(await cell.innerText()).toContain('Not needed')
      const target = localDay(Date.now() + (viewport === TABLET_LANDSCAPE ? 7 : 12) * 86_400_000)
      const dialog = page.getByTestId('plan-dialog')
      if (by === 'touch') {
        await cell.tap()
        await dialog.waitFor()
        await page.getByTestId('plan-target-date').fill(target)
        await dialog.getByText('Cover for absence', { exact: true }).tap()
        await page.getByLabel('Note (optional)').fill('Covers the early shift in December')
        await shot(page, viewport, '2-dialog')
        expect(await axeViolations(page), 'axe on the plan dialog').toEqual([])
        await page.getByTestId('plan-save').tap()
      }
      else {
        await cell.focus()
        await page.keyboard.press('Enter')
        await dialog.waitFor()
        // The dialog takes the focus; Escape closes it and the focus goes back to the cell.
        await expect.poll(() => page.evaluate(() => document.activeElement?.id)).toBe('plan-target-date')
        await page.keyboard.press('Escape')
        await dialog.waitFor({ state: 'hidden' })
        await expect.poll(() => cell.evaluate(el => el === document.activeElement)).toBe(true)
        await page.keyboard.press('Enter')
        await dialog.waitFor()
        await page.getByTestId('plan-target-date').fill(target)
        await page.keyboard.press('Tab')
        // Arrow keys move through the reasons (a radio group), Space picks.
        await page.getByTestId('plan-reason-turnover').focus()
        await page.keyboard.press('Space')
        await page.keyboard.press('ArrowRight')
        await page.keyboard.press('ArrowRight')
        await shot(page, viewport, '2-dialog')
        expect(await axeViolations(page), 'axe on the plan dialog').toEqual([])
        await page.getByTestId('plan-save').focus()
        await page.keyboard.press('Enter')
      }
      await dialog.waitFor({ state: 'hidden' })
      const words = `Planned by ${shortDate(dayStart(target), Date.now())}`
      await expect.poll(() => cell.innerText()).toContain(words)
      expect(await cell.getAttribute('data-status')).toBe('planned')
      await expect.poll(() => cell.evaluate(el => el === document.activeElement)).toBe(true)
      expect(await page.getByTestId('plan-announcement').innerText()).toContain(words)
      await shot(page, viewport, '3-planned')

      const after = await (await context.request.get('/api/plan')).json() as PlanMatrix
      expect(after.cells.find(c => c.learnerId === learner.id && c.jobId === job.id)).toMatchObject({
        status: 'planned',
        targetDate: target,
        reason: by === 'touch' ? 'absence-cover' : 'new-job',
      })

      // Filters run on the server: "Late" leaves only learners with a late item.
      await page.getByTestId('plan-filter-status').selectOption('late')
      await expect.poll(() => page.getByTestId('plan-count').innerText()).toMatch(/^Learners \d+–\d+ of \d+ \(\d+ on the roster\)/)
      await expect.poll(async () => {
        const rows = await page.locator('tbody tr').count()
        const withLate = await page.locator('tbody tr:has([data-status="late"])').count()
        return rows > 0 && rows === withLate
      }).toBe(true)

      // The print layout: A4 landscape, without the header, filters and buttons.
      await page.getByTestId('plan-filter-status').selectOption('')
      await expect.poll(() => page.locator('tbody tr').count()).toBe(before.learners.length)
      if (viewport === TABLET_LANDSCAPE) {
        await page.emulateMedia({ media: 'print' })
        await page.setViewportSize({ width: 1123, height: 794 })
        expect(await page.locator('header').isVisible()).toBe(false)
        expect(await page.getByTestId('plan-filter-status').isVisible()).toBe(false)
        expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(1123)
        await page.screenshot({ path: `${SHOTS}/plan-print-a4-landscape.png`, fullPage: true })
        const pdf = await page.pdf({ preferCSSPageSize: true, printBackground: true })
        expect(pdf.subarray(0, 5).toString()).toBe('%PDF-')
        await writeFile(`${SHOTS}/plan-print.pdf`, pdf)
        // A4 landscape: the page box is 297 × 210 mm, 841.9 × 595.3 pt (Chromium rounds to 594.96).
        expect(pdf.toString('latin1')).toMatch(/\/MediaBox \[0 0 841\.9\d* 59[45]\.\d+\]/)
        await page.emulateMedia({ media: 'screen' })
      }
      if (by === 'keyboard') {
        // Without a connection the plan says plainly that it needs one.
        // (Service workers are blocked here, so every screen's script is fetched once online first.)
        await visit(page, '/')
        await routerPush(page, '/needs-connection')
        await routerPush(page, '/plan')
        await page.getByTestId('plan-matrix').waitFor()
        await routerPush(page, '/')
        await context.setOffline(true)
        await routerPush(page, '/plan')
        await page.waitForURL(url => url.pathname === '/needs-connection')
        await expect.poll(() => page.locator('h1').innerText()).toBe('The plan needs a connection')
        await shot(page, viewport, '4-offline')
        await context.setOffline(false)
      }
      expect(pageErrors).toEqual([])
    }
    catch (error) {
      await page.screenshot({ path: `${SHOTS}/plan-failure-${Date.now()}.png`, fullPage: true }).catch(() => {})
      throw error
    }
    finally {
      await context.close()
    }
  })
})
