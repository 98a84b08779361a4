// The breakdown editor in Debian Chromium at tablet size: an admin creates a job with hazards,
// writes three important steps with key points of each kind and a photo, reorders by drag and
// by keyboard (announced), waits for the autosave, publishes with a change note (after the
// server refused an empty step, shown beside it), prints the sheet to PDF; then a second draft
// meets a stale save (409 → reload, own text kept), the two versions are compared, and the
// draft is split into units, each printed on its own page.
// Screenshots go to /tmp/fourfold-screens for a person to look at.
import { mkdir, readFile, stat, writeFile } from 'node:fs/promises'
import { join } from 'node:path'
import sharp from 'sharp'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, BrowserContext, Page } from 'playwright-core'
import { PASSWORD, uniqueEmail } from '../support/accounts'
import { TABLET_LANDSCAPE, TABLET_PORTRAIT, launchBrowser, openContext, overflowsSideways, smallTargets, visit, waitForHydration } from '../support/browser'
import { startServer, type TestServer } from '../support/server'

const SHOTS = '/tmp/fourfold-screens'
const UUID = '[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}'

let server: TestServer
let browser: Browser
let photoPath: string

beforeAll(async () => {
  server = await startServer()
  browser = await launchBrowser()
  await mkdir(SHOTS, { recursive: true })
  // A small real JPEG (with a gradient, so it is not a trivial image), written where the file picker can find it.
  photoPath = join(server.dir, 'blade-guard.jpg')
  const width = 320
  const height = 240
  const pixels = Buffer.alloc(width * height * 3)
  for (let y = 0; y < height; y++) {
    for (let x = 0; x < width; x++) {
      const i = (y * width + x) * 3
      pixels[i] = Math.round((x / width) * 255)
      pixels[i + 1] = 140
      pixels[i + 2] = Math.round((y / height) * 255)
    }
  }
  await sharp(pixels, { raw: { width, height, channels: 3 } }).jpeg({ quality: 80 }).toFile(photoPath)
})

afterAll(async () => {
  await browser?.close()
  await server?.stop()
})

async function waitForPath(page: Page, pattern: RegExp) {
  await page.waitForURL(url => pattern.test(url.pathname))
  await waitForHydration(page)
}

const saveState = (page: Page) => page.locator('[data-save-state]').innerText()
const announced = (page: Page) => page.locator('[data-announcer]').innerText()
const stepTexts = (page: Page) => page.locator('[data-step] input[id^="step-text-"]').evaluateAll(els => els.map(el => (el as HTMLInputElement).value))
const stepIds = (page: Page) => page.locator('[data-step]').evaluateAll(els => els.map(el => el.getAttribute('data-step')!))

async function waitForSaved(page: Page) {
  await expect.poll(() => saveState(page), { timeout: 15_000 }).toMatch(/^Saved \d{2}:\d{2}$/)
}

async function addStep(page: Page, n: number, text: string) {
  await page.getByRole('button', { name: 'Add important step', exact: true }).click()
  const input = page.getByLabel(`Important step ${n}`, { exact: true })
  // The new step's input has the focus, ready to type.
  await expect.poll(() => input.evaluate(el => el === document.activeElement)).toBe(true)
  await input.fill(text)
}

async function addKeyPoint(page: Page, step: number, kind: 'Quality' | 'Safety' | 'Knack', text: string, reason: string) {
  await page.getByRole('button', { name: `Add key point to step ${step}`, exact: true }).click()
  const group = page.getByRole('group', { name: `Kind of key point 1 of step ${step}`, exact: true })
  await group.getByRole('button', { name: kind, exact: true }).click()
  expect(await group.getByRole('button', { name: kind, exact: true }).getAttribute('aria-pressed')).toBe('true')
  await page.getByLabel(`Key point 1 of step ${step}`, { exact: true }).fill(text)
  const card = page.locator('[data-key-point]').filter({ has: page.getByLabel(`Key point 1 of step ${step}`, { exact: true }) })
  // A key point without a reason is suggested one, beside it, until the reason is written.
  await expect.poll(() => card.locator('[data-guidance-rule="key-point-reason"]').count()).toBe(1)
  await page.getByLabel(`Reason for key point 1 of step ${step}`, { exact: true }).fill(reason)
  await expect.poll(() => card.locator('[data-guidance-rule="key-point-reason"]').count()).toBe(0)
}

/**
 * Press on the handle, move in small steps (as a finger or mouse does) to the top edge of the
 * target card, wait until the list has made room there, release.
 */
async function dragHandle(page: Page, fromId: string, toId: string) {
  const from = (await page.locator(`[data-drag-handle="${fromId}"]`).boundingBox())!
  const target = (await page.locator(`li[data-step="${toId}"]`).boundingBox())!
  const x = from.x + from.width / 2
  await page.mouse.move(x, from.y + from.height / 2)
  await page.mouse.down()
  await page.mouse.move(x, from.y + from.height / 2 - 8, { steps: 4 })
  await page.mouse.move(x, target.y + 6, { steps: 20 })
  // Sortable moves the dragged card into its new place while the pointer is down.
  await expect.poll(() => page.locator('ol > li[data-step]').first().getAttribute('data-step')).toBe(fromId)
  await page.mouse.up()
}

/** A screenshot for a person to look at; from the top, so sticky bars sit where they belong. */
async function shot(page: Page, name: string, fullPage = true) {
  if (fullPage) await page.evaluate(() => window.scrollTo(0, 0))
  await page.screenshot({ path: `${SHOTS}/${name}.png`, fullPage })
}

async function expectTabletFriendly(page: Page, where: string) {
  const { checked, problems } = await smallTargets(page, 44)
  expect(checked).toBeGreaterThan(0)
  expect(problems, `small targets on ${where}`).toEqual([])
  expect(await overflowsSideways(page), `sideways scroll on ${where}`).toBe(false)
}

describe('breakdown editor at tablet size', () => {
  let jobPath = ''
  let v1 = ''
  let finalIds: string[] = []
  let cookies: Awaited<ReturnType<BrowserContext['cookies']>> = []
  let v2 = ''

  it('writes, reorders, photographs, publishes and prints a breakdown', async () => {
    const { context, page, pageErrors } = await openContext(browser, server.url, TABLET_LANDSCAPE)
    try {
      await visit(page, '/sign-up')
      await page.getByLabel('Organisation').fill('Crumb & Crust Bakery')
      await page.getByLabel('Your name').fill('Bea Baker')
      await page.getByLabel('E-mail address').fill(uniqueEmail('editor-admin'))
      await page.getByLabel('Password').fill(PASSWORD)
      await page.getByRole('button', { name: 'Create organisation' }).click()
      await waitForPath(page, /^\/settings\/members$/)

      // A job with hazards and PPE, from the Jobs screen.
      await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Jobs' }).click()
      await waitForPath(page, /^\/jobs$/)
      await expect.poll(() => page.getByText('No jobs yet.').isVisible()).toBe(true)
      await page.getByRole('link', { name: 'New job' }).click()
      await waitForPath(page, /^\/jobs\/new$/)
      await page.getByLabel('Title', { exact: true }).fill('Change the slicer blade set')
      await page.getByLabel('Purpose').fill('Fit a sharp blade set so loaves slice cleanly.')
      await page.getByRole('button', { name: 'Add a hazard' }).click()
      await page.getByLabel('Hazard 1: kind').selectOption({ label: 'Moving parts and stored energy' })
      await page.getByLabel('Hazard 1: description').fill('The blade carrier can turn by hand')
      await page.getByRole('button', { name: 'Add a hazard' }).click()
      await page.getByLabel('Hazard 2: kind').selectOption({ label: 'Sharp edges' })
      await page.getByRole('button', { name: 'Add PPE' }).click()
      await page.getByLabel('PPE item 1', { exact: true }).fill('Cut-resistant gloves')
      await page.getByRole('button', { name: 'Create job' }).click()
      await waitForPath(page, new RegExp(`^/jobs/${UUID}$`))
      jobPath = new URL(page.url()).pathname

      const cautions = page.getByRole('region', { name: 'Safety cautions' })
      const cautionText = await cautions.innerText()
      expect(cautionText).toContain('lockout/tagout')
      expect(cautionText).toContain('cut-resistant gloves')
      expect(cautionText).toContain('PPE for this job: Cut-resistant gloves.')
      expect(cautionText).toContain('OSHA 29 CFR 1910.178(l)(2)')
      expect(cautionText).toContain('Local regulations, site procedures and licensed practice come first.')
      await expect.poll(() => page.getByText('No breakdown yet').first().isVisible()).toBe(true)

      await page.getByRole('button', { name: 'Start a new draft' }).click()
      await waitForPath(page, new RegExp(`^/versions/${UUID}/edit$`))
      v1 = new URL(page.url()).pathname.split('/')[2]!
      expect(await saveState(page)).toBe('No changes yet')
      // Hazards and no safety key point yet: the method's rule, with its source.
      const list = page.locator('[data-guidance-list]')
      await expect.poll(() => list.locator('[data-guidance-rule="safety-key-point"]').count()).toBe(1)
      expect(await list.innerText()).toContain('War Manpower Commission, 1944')

      // Three steps, typed in the wrong order on purpose; the first one too long at first.
      await addStep(page, 1, 'Swap the old blade set for the new one from the rack')
      await expect.poll(() => page.locator('[data-step] [data-guidance-rule="long-step"]').count()).toBe(1)
      await page.getByLabel('Important step 1', { exact: true }).fill('Swap the blade set')
      await expect.poll(() => page.locator('[data-guidance-rule="long-step"]').count()).toBe(0)
      await addStep(page, 2, 'Lock out the slicer')
      await addStep(page, 3, 'Lift off the blade guard')
      const typed = await stepIds(page)
      expect(typed).toHaveLength(3)
      for (const id of typed) expect(id).toMatch(new RegExp(`^${UUID}$`))

      // Drag "Lock out the slicer" (step 2) by its handle above step 1.
      await dragHandle(page, typed[1]!, typed[0]!)
      await expect.poll(() => stepTexts(page)).toEqual(['Lock out the slicer', 'Swap the blade set', 'Lift off the blade guard'])
      await expect.poll(() => announced(page)).toBe('Step 2 moved to position 1.')
      // Then by keyboard: Move up on step 3, pressed with Enter.
      await page.getByRole('button', { name: 'Move up step 3', exact: true }).focus()
      await page.keyboard.press('Enter')
      await expect.poll(() => stepTexts(page)).toEqual(['Lock out the slicer', 'Lift off the blade guard', 'Swap the blade set'])
      await expect.poll(() => announced(page)).toBe('Step 3 moved to position 2.')
      // The focus stays with the moved step's button, so another press would move it again.
      expect(await page.evaluate(() => document.activeElement?.id)).toBe(`move-up-${typed[2]}`)
      // Moving never changes an element's id (lineage).
      finalIds = [typed[1]!, typed[2]!, typed[0]!]
      expect(await stepIds(page)).toEqual(finalIds)

      // Key points of each kind, with reasons.
      await addKeyPoint(page, 1, 'Safety', 'Padlock on the main isolator, key in your pocket', 'The carrier can start while your hands are inside')
      await expect.poll(() => list.locator('[data-guidance-rule="safety-key-point"]').count()).toBe(0)
      await addKeyPoint(page, 2, 'Quality', 'Lift straight up', 'A twisted guard bends its hinge pins')
      await addKeyPoint(page, 3, 'Knack', 'Rock the set gently to free it', 'Crumbs make it stick; rocking frees it without force')

      // A photo of step 2 from the "camera" (a file here).
      const photoInput = page.getByLabel('Add photo for step 2', { exact: true })
      expect(await photoInput.getAttribute('accept')).toBe('image/*')
      expect(await photoInput.getAttribute('capture')).toBe('environment')
      await photoInput.setInputFiles(photoPath)
      const thumb = page.locator(`[data-step="${finalIds[1]}"] > div img[data-photo-thumb]`)
      await expect.poll(() => thumb.evaluate(img => (img as HTMLImageElement).complete && (img as HTMLImageElement).naturalWidth > 0), { timeout: 15_000 }).toBe(true)
      expect(await thumb.getAttribute('alt')).toBe('Photo for step 2')

      await waitForSaved(page)
      await expectTabletFriendly(page, 'the editor (landscape)')
      await shot(page, 'editor-landscape')

      // What the server holds is what the screen shows, in the same order, with the same ids.
      const saved = await (await page.request.get(`/api/versions/${v1}`)).json() as { revision: number, content: { units: Array<{ steps: Array<{ id: string, text: string, photoId: string | null, keyPoints: Array<{ kind: string, text: string, reason: string }> }> }> } }
      const steps = saved.content.units[0]!.steps
      expect(steps.map(s => s.id)).toEqual(finalIds)
      expect(steps.map(s => s.text)).toEqual(['Lock out the slicer', 'Lift off the blade guard', 'Swap the blade set'])
      expect(steps.map(s => s.keyPoints.map(k => k.kind))).toEqual([['safety'], ['quality'], ['knack']])
      expect(steps[1]!.photoId).toMatch(new RegExp(`^${UUID}$`))
      expect(steps[0]!.photoId).toBeNull()
      expect(saved.revision).toBeGreaterThan(0)

      // Publishing an empty step is refused by the server; the reason shows beside the step.
      await addStep(page, 4, '')
      await waitForSaved(page)
      await page.getByRole('button', { name: 'Publish', exact: true }).click()
      const dialog = page.getByRole('dialog', { name: 'Publish v1' })
      await expect.poll(() => dialog.isVisible()).toBe(true)
      // The change note is required.
      await dialog.getByRole('button', { name: 'Publish v1' }).click()
      await expect.poll(() => dialog.getByRole('alert').innerText()).toContain('Say what changed in this version.')
      await dialog.getByLabel('What changed (change note)').fill('First version.')
      await dialog.getByRole('button', { name: 'Publish v1' }).click()
      const problems = page.locator('[data-publish-problems]')
      await expect.poll(() => problems.isVisible()).toBe(true)
      expect(await problems.innerText()).toContain('Step 4 has no text.')
      const emptyStep = page.locator('[data-step]').nth(3)
      expect(await emptyStep.getByRole('alert').innerText()).toContain('Before publishing: Step 4 has no text.')
      await emptyStep.getByRole('button', { name: 'Remove step 4', exact: true }).click()
      await expect.poll(() => announced(page)).toBe('Step 4 removed.')
      await waitForSaved(page)

      await page.getByRole('button', { name: 'Publish', exact: true }).click()
      await expect.poll(() => dialog.isVisible()).toBe(true)
      await dialog.getByLabel('What changed (change note)').fill('First version.')
      await dialog.getByRole('button', { name: 'Publish v1' }).click()
      await waitForPath(page, new RegExp(`^/versions/${v1}$`))
      await expect.poll(() => page.locator('[data-version-status]').innerText()).toBe('Published v1')
      await expect.poll(() => page.getByText('What changed: First version.').isVisible()).toBe(true)
      expect(await page.getByText('Published').filter({ hasText: 'by Bea Baker' }).count()).toBeGreaterThan(0)

      // The printable sheet: three columns, kinds in words, cautions; A4 PDF.
      await visit(page, `/versions/${v1}/print`)
      const sheet = page.locator('article.sheet')
      const headers = await sheet.locator('thead th').allInnerTexts()
      expect(headers.map(h => h.trim())).toEqual(['Important steps', 'Key points', 'Reasons'])
      const sheetText = await sheet.innerText()
      for (const words of ['Change the slicer blade set', 'Published v1', 'Bea Baker', 'Safety:', 'Quality:', 'Knack:', 'The carrier can start while your hands are inside', 'Cut-resistant gloves', 'Local regulations, site procedures and licensed practice come first.']) {
        expect(sheetText).toContain(words)
      }
      expect(await page.getByRole('navigation', { name: 'Main' }).count()).toBe(0)
      await expect.poll(() => sheet.locator('img.sheet-photo').evaluate(img => (img as HTMLImageElement).naturalWidth > 0)).toBe(true)
      await shot(page, 'print-screen')
      await page.getByRole('button', { name: 'Letter' }).click()
      expect(await page.locator('[data-paper]').getAttribute('data-paper')).toBe('letter')
      expect(await page.locator('.print-page').evaluate(el => el.classList.contains('paper-letter'))).toBe(true)
      expect(await page.evaluate(() => document.documentElement.classList.contains('print-paper-letter'))).toBe(true)
      await page.getByRole('button', { name: 'A4' }).click()
      await page.emulateMedia({ media: 'print' })
      expect(await page.getByRole('button', { name: 'Print' }).isVisible()).toBe(false)
      await shot(page, 'print-media')
      const pdfPath = join(SHOTS, 'breakdown-sheet.pdf')
      const firstPdf = await page.pdf({ path: pdfPath, format: 'A4', printBackground: true })
      // Three short steps fit on one page: no empty page after the sheet.
      expect(firstPdf.toString('latin1').match(/\/Type\s*\/Page(?![s\w])/g)).toHaveLength(1)
      await page.emulateMedia({ media: 'screen' })
      expect((await stat(pdfPath)).size).toBeGreaterThan(2000)
      expect((await readFile(pdfPath)).subarray(0, 5).toString('latin1')).toBe('%PDF-')

      // The jobs list says where the breakdown stands, in words.
      await visit(page, '/jobs')
      const row = page.locator('[data-job="Change the slicer blade set"]')
      expect(await row.innerText()).toContain('Published v1')
      expect(await row.innerText()).toContain('Moving parts and stored energy, Sharp edges')
      await expectTabletFriendly(page, 'the jobs list')
      cookies = await context.cookies()
      expect(pageErrors).toEqual([])
    }
    catch (error) {
      // What the screen looked like when it failed, for whoever reads the failure.
      await page.screenshot({ path: `${SHOTS}/failure-${Date.now()}.png`, fullPage: true }).catch(() => {})
      throw new Error(`${(error as Error).message}\npage errors: ${pageErrors.map(e => e.message).join(' | ') || 'none'}`, { cause: error })
    }
    finally {
      await context.close()
    }
  })

  it('a second draft: a stale save is refused and reloaded, then the versions are compared side by side', async () => {
    expect(v1, 'the first test published v1').not.toBe('')
    const { context, page, pageErrors } = await openContext(browser, server.url, TABLET_PORTRAIT)
    try {
      // The same coach on a second tablet (portrait), already signed in.
      await context.addCookies(cookies)
      await visit(page, jobPath)
      const start = page.getByRole('button', { name: 'Start a new draft' })
      await expect.poll(() => start.isVisible()).toBe(true)
      // Meanwhile someone else starts the draft; this page still offers to start one.
      const other = await page.request.post(`${jobPath.replace('/jobs/', '/api/jobs/')}/versions`)
      expect(other.status()).toBe(201)
      v2 = (await other.json() as { id: string }).id
      await start.click()
      // 409 "already has a draft" leads to that draft instead of a second one.
      await waitForPath(page, new RegExp(`^/versions/${v2}/edit$`))
      // The new draft starts from v1 with the same lineage ids.
      await expect.poll(() => stepIds(page)).toEqual(finalIds)
      expect(await saveState(page)).toBe('No changes yet')

      // Another coach saves first (revision 0 → 1) …
      const current = await (await page.request.get(`/api/versions/${v2}`)).json() as { revision: number, content: { units: Array<{ steps: Array<{ text: string }> }> } }
      current.content.units[0]!.steps[2]!.text = 'Fit the new blade set'
      const theirs = await page.request.patch(`/api/versions/${v2}`, { data: { revision: current.revision, content: current.content } })
      expect(theirs.status()).toBe(200)
      // … so this tablet's save, based on revision 0, is refused and nothing is overwritten.
      await page.getByLabel('Important step 1', { exact: true }).fill('Lock out and tag the slicer')
      const conflict = page.getByRole('dialog', { name: 'Someone else changed this draft' })
      await expect.poll(() => conflict.isVisible(), { timeout: 15_000 }).toBe(true)
      expect(await saveState(page)).toBe('Someone else changed this draft')
      expect(await conflict.getByLabel('Your unsaved text').inputValue()).toContain('Lock out and tag the slicer')
      await shot(page, 'editor-conflict', false)
      const onServer = await (await page.request.get(`/api/versions/${v2}`)).json() as { content: { units: Array<{ steps: Array<{ text: string }> }> } }
      expect(onServer.content.units[0]!.steps.map(s => s.text)).toEqual(['Lock out the slicer', 'Lift off the blade guard', 'Fit the new blade set'])

      await conflict.getByRole('button', { name: 'Load the latest draft' }).click()
      await expect.poll(() => conflict.isVisible()).toBe(false)
      await expect.poll(() => stepTexts(page)).toEqual(['Lock out the slicer', 'Lift off the blade guard', 'Fit the new blade set'])
      const kept = page.getByRole('region', { name: 'Your text from before loading the latest draft' })
      expect(await kept.getByRole('textbox').inputValue()).toContain('Lock out and tag the slicer')

      // Carry the change over again, and move a step; this time it saves.
      await page.getByLabel('Important step 1', { exact: true }).fill('Lock out and tag the slicer')
      await page.getByRole('button', { name: 'Move down step 2', exact: true }).click()
      await expect.poll(() => announced(page)).toBe('Step 2 moved to position 3.')
      await waitForSaved(page)
      await page.getByRole('button', { name: 'Dismiss my earlier text' }).click()
      await expectTabletFriendly(page, 'the editor (portrait)')
      await shot(page, 'editor-portrait')

      // Side by side: v1 (older) | v2 (newer), each element marked in words.
      await visit(page, jobPath)
      await expect.poll(() => page.getByText('Draft in progress').first().isVisible()).toBe(true)
      await page.getByRole('link', { name: 'Compare two versions' }).click()
      await waitForPath(page, /\/compare$/)
      const url = new URL(page.url())
      expect(url.searchParams.get('from')).toBe(v1)
      expect(url.searchParams.get('to')).toBe(v2)
      await expect.poll(() => page.locator('[data-diff-summary]').innerText()).toContain('From v1 to v2: 0 added, 0 removed, 2 reworded, 1 moved')
      const table = page.getByRole('table')
      expect(await table.locator('thead th').allInnerTexts()).toEqual(['Older: Published v1', 'Newer: Draft v2', 'What happened'])
      const reworded = table.locator('tr[data-diff-changes~="reworded"]')
      expect(await reworded.count()).toBe(2)
      expect(await reworded.first().innerText()).toContain('Lock out the slicer')
      expect(await reworded.first().innerText()).toContain('Lock out and tag the slicer')
      expect(await reworded.first().innerText()).toContain('Reworded')
      expect(await table.locator('tr[data-diff-changes~="moved"]').innerText()).toContain('Moved')
      await page.getByLabel('Show only changes').check()
      await expect.poll(() => table.locator('tr[data-diff-status="same"]').count()).toBe(0)
      await expectTabletFriendly(page, 'the comparison')
      await shot(page, 'compare')
      expect(pageErrors).toEqual([])
    }
    catch (error) {
      // What the screen looked like when it failed, for whoever reads the failure.
      await page.screenshot({ path: `${SHOTS}/failure-${Date.now()}.png`, fullPage: true }).catch(() => {})
      throw new Error(`${(error as Error).message}\npage errors: ${pageErrors.map(e => e.message).join(' | ') || 'none'}`, { cause: error })
    }
    finally {
      await context.close()
    }
  })

  it('splits a draft into units, moves steps between them by keyboard, saves after the connection returns, prints each unit on its own page; import', async () => {
    expect(v2, 'the second test started v2').not.toBe('')
    const { context, page, pageErrors } = await openContext(browser, server.url, TABLET_LANDSCAPE)
    try {
      await context.addCookies(cookies)
      await visit(page, `/versions/${v2}/edit`)
      await page.getByRole('button', { name: 'Split into units' }).click()
      await expect.poll(() => announced(page)).toBe('The breakdown is now split into units. Give each unit a title.')
      const title1 = page.getByLabel('Title of unit 1', { exact: true })
      expect(await title1.evaluate(el => el === document.activeElement)).toBe(true)
      await title1.fill('Make the slicer safe')
      await page.getByLabel('Title of unit 2', { exact: true }).fill('Change the blades')

      // Past the end of unit 1, Move down carries a step into unit 2.
      await page.getByRole('button', { name: 'Move down step 3 of unit 1', exact: true }).click()
      await expect.poll(() => announced(page)).toBe('Step 3 of unit 1 moved to unit 2, position 1.')
      await page.getByRole('button', { name: 'Move down step 2 of unit 1', exact: true }).click()
      await expect.poll(() => announced(page)).toBe('Step 2 of unit 1 moved to unit 2, position 1.')
      await page.getByRole('button', { name: 'Move down step 1 of unit 2', exact: true }).click()
      await expect.poll(() => announced(page)).toBe('Step 1 of unit 2 moved to position 2.')
      await waitForSaved(page)

      // The connection drops: the editor says so, keeps the edit, and saves it when the connection returns.
      await context.setOffline(true)
      await expect.poll(() => page.getByRole('alert').filter({ hasText: 'the breakdown editor needs a connection' }).isVisible()).toBe(true)
      await page.getByLabel('Title of unit 2', { exact: true }).fill('Change the blade set')
      await expect.poll(() => saveState(page), { timeout: 15_000 }).toBe('Not saved: no connection — will retry')
      await shot(page, 'editor-offline', false)
      await context.setOffline(false)
      await waitForSaved(page)
      await page.getByLabel('Title of unit 2', { exact: true }).fill('Change the blades')
      await waitForSaved(page)

      const saved = await (await page.request.get(`/api/versions/${v2}`)).json() as { content: { units: Array<{ title: string, steps: Array<{ id: string, text: string }> }> } }
      expect(saved.content.units.map(u => [u.title, u.steps.map(s => s.text)])).toEqual([
        ['Make the slicer safe', ['Lock out and tag the slicer']],
        ['Change the blades', ['Lift off the blade guard', 'Fit the new blade set']],
      ])
      // Still the same elements: moving between units keeps lineage ids.
      expect(saved.content.units.flatMap(u => u.steps.map(s => s.id)).sort()).toEqual([...finalIds].sort())
      await shot(page, 'editor-units')

      await visit(page, `/versions/${v2}/print`)
      const sheet = page.locator('article.sheet')
      expect(await sheet.getByRole('heading', { name: 'Unit 1: Make the slicer safe' }).count()).toBe(1)
      expect(await sheet.getByRole('heading', { name: 'Unit 2: Change the blades' }).count()).toBe(1)
      expect(await sheet.innerText()).toContain('Not approved: draft')
      await shot(page, 'print-units')
      const pdf = await page.pdf({ format: 'A4', printBackground: true })
      await page.emulateMedia({ media: 'screen' })
      await writeFile(join(SHOTS, 'breakdown-units.pdf'), pdf)
      expect(pdf.subarray(0, 5).toString('latin1')).toBe('%PDF-')
      // The job's page, then one page per unit (break-before: page). Page objects counted in the file.
      const pages = pdf.toString('latin1').match(/\/Type\s*\/Page(?![s\w])/g) ?? []
      expect(pages.length).toBe(3)

      // Import on the jobs list: the export of v1 (with its photo) becomes a new job with a draft.
      const exported = await page.request.get(`/api/versions/${v1}/export`)
      expect(exported.status()).toBe(200)
      const exportDoc = await exported.json() as { job: { title: string }, breakdown: { units: Array<{ steps: Array<{ id: string }> }> } }
      exportDoc.job.title = 'Change the slicer blade set (imported)'
      const goodFile = join(server.dir, 'good-export.json')
      await writeFile(goodFile, JSON.stringify(exportDoc))
      const broken = structuredClone(exportDoc) as Record<string, any>
      broken.format = 'something else'
      broken.breakdown.units[0].steps[0].id = 'not-a-uuid'
      const badFile = join(server.dir, 'bad-export.json')
      await writeFile(badFile, JSON.stringify(broken))
      await visit(page, '/jobs')
      const importer = page.getByRole('region', { name: 'Import a breakdown' })
      const picker = importer.getByLabel('Choose a file to import')
      await picker.setInputFiles(badFile)
      const problem = importer.getByRole('alert')
      await expect.poll(() => problem.isVisible()).toBe(true)
      const problemText = await problem.innerText()
      expect(problemText).toContain('“bad-export.json” could not be imported')
      // Field errors are shown by where they are, in words.
      expect(problemText).toContain('Format:')
      expect(problemText).toContain('Breakdown › unit 1 › step 1 › id:')
      await importer.screenshot({ path: `${SHOTS}/import-problem.png` })
      await picker.setInputFiles(goodFile)
      const done = importer.getByRole('status').filter({ hasText: 'Done:' })
      await expect.poll(() => done.isVisible()).toBe(true)
      expect(await done.innerText()).toContain('1 photo was left out, because photos do not travel')
      await expect.poll(() => page.locator('[data-job="Change the slicer blade set (imported)"]').innerText()).toContain('Draft in progress')
      await done.getByRole('link', { name: 'Open the imported draft' }).click()
      await waitForPath(page, new RegExp(`^/versions/${UUID}/edit$`))
      await expect.poll(() => stepTexts(page)).toEqual(['Lock out the slicer', 'Lift off the blade guard', 'Swap the blade set'])
      expect(await page.locator('img[data-photo-thumb]').count()).toBe(0)
      expect(pageErrors).toEqual([])
    }
    catch (error) {
      await page.screenshot({ path: `${SHOTS}/failure-${Date.now()}.png`, fullPage: true }).catch(() => {})
      throw new Error(`${(error as Error).message}\npage errors: ${pageErrors.map(e => e.message).join(' | ') || 'none'}`, { cause: error })
    }
    finally {
      await context.close()
    }
  })
})
