// The lesson runner in real Chromium at both tablet shapes: a coach starts a lesson from the
// tablet's own data, runs all four stages (with an undo, an out-of-order T2, a reload in the
// middle of T3 and an extra pass), signs off, and every event is read back from IndexedDB.
// Each screen is checked with axe-core (WCAG 2.2 AA rules) and photographed into /tmp.
import { existsSync } from 'node:fs'
import { randomUUID } from 'node:crypto'
import sharp from 'sharp'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, BrowserContext, Page } from 'playwright-core'
import { PASSWORD, addMember, signUp } from '../support/accounts'
import { idbRows, launchBrowser, openContext, overflowsSideways, smallTargets, TABLET_VIEWPORTS, visit, waitForHydration, type Viewport } from '../support/browser'
import { photoForm } from '../support/photos'
import { startServer, type TestServer } from '../support/server'
import type { Client } from '../support/http'
import type { BreakdownContent } from '../../shared/schemas/breakdown'
import { replayLesson } from '../../shared/utils/lesson-state'
import type { LessonEvent } from '../../shared/utils/lesson-events'
import { axeViolations } from '../support/axe'

let server: TestServer
let browser: Browser

// The offline run needs the PWA developer's service worker and its own test (issue 4's contract).
const OFFLINE_SUPPORT = existsSync('tests/browser/offline.test.ts')

beforeAll(async () => {
  server = await startServer()
  browser = await launchBrowser()
})

afterAll(async () => {
  await browser?.close()
  await server?.stop()
})

/** Invented for the test (our demo bakery's slicer): three steps, three key points, two with a reason. */
function slicerBreakdown(photoId: string): BreakdownContent {
  return {
    units: [{
      id: randomUUID(),
      title: '',
      steps: [
        {
          id: randomUUID(),
          text: 'Stop and lock out the slicer',
          photoId,
          keyPoints: [
            { id: randomUUID(), kind: 'safety', text: 'Own padlock on the isolator', reason: 'Nobody else can start the drive', photoId: null },
            { id: randomUUID(), kind: 'quality', text: 'Press start to prove it is dead', reason: '', photoId: null },
          ],
        },
        { id: randomUUID(), text: 'Open the blade guard', photoId: null, keyPoints: [{ id: randomUUID(), kind: 'knack', text: 'Lift both latches together', reason: 'One latch alone jams the guard', photoId: null }] },
        { id: randomUUID(), text: 'Fit the new blade set', photoId: null, keyPoints: [] },
      ],
    }],
  }
}

/** An invented 800 × 600 picture (a padlocked isolator, drawn in shapes) so the card shows a real-sized photo. */
async function isolatorPhoto(): Promise<Buffer> {
  const svg = `<svg xmlns="http://www.w3.org/2000/svg" width="800" height="600">
    <rect width="800" height="600" fill="#d8c3a0"/>
    <rect x="250" y="90" width="300" height="420" rx="24" fill="#5a6470"/>
    <rect x="330" y="170" width="140" height="200" rx="12" fill="#b3372a"/>
    <path d="M370 330 v-40 a30 30 0 0 1 60 0 v40" fill="none" stroke="#f1c232" stroke-width="14"/>
    <rect x="350" y="330" width="100" height="80" rx="8" fill="#f1c232"/>
  </svg>`
  return sharp(Buffer.from(svg)).png().toBuffer()
}

async function setUpOrganisation(label: string) {
  const admin = await signUp(server, `Harbour Bakery ${label}`)
  const coach = await addMember(server, admin.client, 'coach')
  const upload = await admin.client.request('POST', '/api/uploads', photoForm(await isolatorPhoto()))
  if (upload.status !== 201) throw new Error(`upload: ${upload.status} ${upload.text}`)
  const content = slicerBreakdown(upload.body.id)
  const job = await admin.client.post('/api/jobs', {
    title: 'Change the slicer blade set',
    hazards: [{ category: 'sharp-edges', description: 'Blade set' }, { category: 'moving-parts', description: 'Slicer drive' }],
    ppe: ['Cut-resistant gloves'],
    toolsAndMaterials: ['Padlock and tag', 'New blade set'],
    workplaceArrangement: 'Blade box on the bench to the left of the slicer',
    purpose: 'Fit sharp blades so loaves slice clean',
  })
  if (job.status !== 201) throw new Error(`job: ${job.status} ${job.text}`)
  const draft = await admin.client.post(`/api/jobs/${job.body.id}/versions`)
  if (draft.status !== 201) throw new Error(`draft: ${draft.status} ${draft.text}`)
  const saved = await admin.client.patch(`/api/versions/${draft.body.id}`, { revision: 0, content })
  if (saved.status !== 200) throw new Error(`save: ${saved.status} ${saved.text}`)
  const published = await admin.client.post(`/api/versions/${draft.body.id}/publish`, { changeNote: 'First version.' })
  if (published.status !== 200) throw new Error(`publish: ${published.status} ${published.text}`)
  const learner = await (coach.client as Client).post('/api/learners', { name: 'Ilse Brannagh' })
  if (learner.status !== 201) throw new Error(`learner: ${learner.status} ${learner.text}`)
  return { coachEmail: coach.email, content, versionId: draft.body.id as string, learnerId: learner.body.id as string, photoId: upload.body.id as string }
}

/** The smallest text on screen (elements with their own visible text), with a few examples. */
async function smallestText(page: Page) {
  return page.evaluate(() => {
    let min = Infinity
    const small: string[] = []
    // The runner's own screen; the app-wide banners around it are the site's (18 px base).
    for (const el of document.querySelectorAll<HTMLElement>('.runner-layout *')) {
      const own = [...el.childNodes].some(n => n.nodeType === Node.TEXT_NODE && n.textContent!.trim())
      if (!own) continue
      const box = el.getBoundingClientRect()
      const style = getComputedStyle(el)
      if (box.width <= 1 || box.height <= 1 || style.visibility === 'hidden' || style.display === 'none') continue
      const size = Number.parseFloat(style.fontSize)
      if (size < min) min = size
      if (size < 20 && small.length < 5) small.push(`${size}px: ${el.textContent!.trim().slice(0, 40)}`)
    }
    return { min, small }
  })
}

const shotName = (v: Viewport) => `${v.width}x${v.height}${v.name.endsWith('offline') ? '-offline' : ''}`

async function expectRunnerScreen(page: Page, viewport: Viewport, name: string) {
  await page.screenshot({ path: `/tmp/lesson-runner-${shotName(viewport)}-${name}.png` })
  expect(await axeViolations(page), `axe on ${name}`).toEqual([])
  const { checked, problems } = await smallTargets(page, 48)
  expect(checked).toBeGreaterThan(0)
  expect(problems, `targets under 48 px on ${name}`).toEqual([])
  const text = await smallestText(page)
  expect(text.small, `text under 20 px on ${name}`).toEqual([])
  expect(await overflowsSideways(page), `sideways scroll on ${name}`).toBe(false)
}

const cursorOf = (page: Page) => page.locator('main#main').evaluate(el => ({ stage: el.getAttribute('data-stage'), pass: el.getAttribute('data-pass'), index: Number(el.getAttribute('data-index')) }))

async function waitForCursor(page: Page, pass: string, index: number) {
  await expect.poll(() => cursorOf(page)).toMatchObject({ pass, index })
}

/** Taps a mark and waits until IndexedDB has it: the strip shows it in words and the card moves on. */
async function mark(page: Page, value: 'unaided' | 'cued' | 'missed', at: number, pass: string, last = false) {
  await page.locator(`[data-mark="${value}"]`).click()
  const word = { unaided: 'Unaided', cued: 'Cued', missed: 'Missed' }[value]
  await expect.poll(() => page.locator(`[data-strip="${at}"]`).innerText()).toContain(word)
  await waitForCursor(page, pass, last ? at : at + 1)
}

async function present(page: Page, at: number, pass: string, last = false) {
  await page.locator('[data-action="presented"]').click()
  await expect.poll(() => page.locator(`[data-strip="${at}"]`).innerText()).toContain('Presented')
  if (!last) await waitForCursor(page, pass, at + 1)
}

async function closeAndExpect(page: Page, nextPass: string) {
  await page.locator('[data-action="close-pass"]').click()
  await waitForCursor(page, nextPass, 0)
}

async function runLesson(context: BrowserContext, page: Page, viewport: Viewport, setup: Awaited<ReturnType<typeof setUpOrganisation>>, offline: boolean) {
  // Sign in, then the first online visit fills the tablet (the PWA developer's refresh after sign-in).
  const login = await context.request.post('/api/auth/login', { data: { email: setup.coachEmail, password: PASSWORD } })
  expect(login.status()).toBe(200)
  await visit(page, '/')
  await expect.poll(async () => (await idbRows<{ id: string }>(page, 'versions')).map(v => v.id), { timeout: 20_000 }).toEqual([setup.versionId])
  await expect.poll(async () => (await idbRows<{ id: string }>(page, 'learners')).map(l => l.id)).toEqual([setup.learnerId])
  await expect.poll(async () => (await idbRows<{ key: string }>(page, 'photos')).map(p => p.key).sort()).toEqual([`${setup.photoId}:full`, `${setup.photoId}:thumb`])
  if (offline) {
    await page.evaluate(() => navigator.serviceWorker.ready)
    await expect.poll(() => page.evaluate(() => Boolean(navigator.serviceWorker.controller))).toBe(true)
    await context.setOffline(true)
  }

  // Start a lesson: type to search, tap the rows, say where.
  await visit(page, '/lessons/new')
  await page.getByLabel('Type the learner\'s name').fill('ilse')
  await page.locator('[data-pick="learner"]').filter({ hasText: 'Ilse Brannagh' }).click()
  await page.getByLabel('Type the job\'s title').fill('slicer')
  await page.locator('[data-pick="job"]').filter({ hasText: 'Change the slicer blade set' }).click()
  await page.getByLabel('Place').fill('Slicer 2')
  await page.screenshot({ path: `/tmp/lesson-runner-${shotName(viewport)}-0-start.png` })
  expect(await axeViolations(page), 'axe on start a lesson').toEqual([])
  await page.getByRole('button', { name: 'Start the lesson' }).click()
  await page.waitForURL(url => /^\/lessons\/[0-9a-f-]{36}$/.test(url.pathname))
  await waitForHydration(page)
  const lessonId = new URL(page.url()).pathname.split('/').pop()!

  // Stage 1: prepare the worker.
  await expect.poll(() => cursorOf(page)).toMatchObject({ stage: 'prepare' })
  await expect(page.getByTestId('runner-job').innerText()).resolves.toBe('Change the slicer blade set')
  await expect(page.getByTestId('runner-learner').innerText()).resolves.toBe('Ilse Brannagh')
  await expect(page.getByTestId('runner-stage').innerText()).resolves.toContain('Prepare the worker')
  await expect(page.locator('[data-caution="local-rules"]').innerText()).resolves.toContain('Local regulations, site procedures and licensed practice come first')
  const wakeWords = await page.getByTestId('wake-state').innerText()
  expect(wakeWords).toMatch(/Screen kept awake|The screen may sleep|cannot keep the screen awake/)
  await expectRunnerScreen(page, viewport, '1-prepare')
  const ticks = page.locator('[data-prepare]')
  expect(await ticks.count()).toBe(7)
  for (let i = 0; i < 7; i++) {
    await ticks.nth(i).click()
    await expect.poll(() => ticks.nth(i).getAttribute('aria-pressed')).toBe('true')
  }
  await page.getByRole('button', { name: /Add a note to “Put them at ease”/ }).click()
  await page.getByLabel('Note').fill('Talked about the night shift first')
  await page.getByRole('button', { name: 'Save note' }).click()
  await expect(page.getByTestId('prepare-progress').innerText()).resolves.toBe('7 of 7 ticked')
  await page.locator('[data-action="to-present"]').click()

  // Stage 2: present the operation, P1 → P2 → P3, then one more P3 finished early.
  await expect.poll(() => cursorOf(page)).toMatchObject({ stage: 'present', pass: '' })
  await expectRunnerScreen(page, viewport, '2-present-overview')
  await page.locator('[data-action="start-pass"]').click()
  await waitForCursor(page, 'P1-1', 0)
  // The step's photo comes from the tablet's store, not the network.
  await expect.poll(() => page.locator('img.lesson-photo').getAttribute('src')).toMatch(/^blob:/)
  await expect.poll(() => page.locator('img.lesson-photo').evaluate(img => (img as HTMLImageElement).naturalWidth)).toBe(800)
  await expectRunnerScreen(page, viewport, '2-present-P1')
  await present(page, 0, 'P1-1')
  await present(page, 1, 'P1-1')
  await present(page, 2, 'P1-1', true)
  await closeAndExpect(page, 'P2-1')
  await expect(page.getByTestId('pass-title').innerText()).resolves.toBe('P2: Again, stressing the key points')
  // Key points show their kind in words beside our icon.
  const card = await page.locator('article.lesson-card').innerText()
  expect(card).toContain('Safety:')
  expect(card).toContain('Quality:')
  await expectRunnerScreen(page, viewport, '2-present-P2')
  for (let i = 0; i < 3; i++) await present(page, i, 'P2-1', i === 2)
  await closeAndExpect(page, 'P3-1')
  expect(await page.locator('article.lesson-card').innerText()).toContain('Why: Nobody else can start the drive')
  await expectRunnerScreen(page, viewport, '2-present-P3')
  for (let i = 0; i < 3; i++) await present(page, i, 'P3-1', i === 2)
  await page.locator('[data-action="close-pass"]').click()
  await expect.poll(() => cursorOf(page)).toMatchObject({ stage: 'present', pass: '' })
  await page.locator('[data-action="add-present-pass"]').click()
  await page.locator('[data-add-pass="P3"]').click()
  await waitForCursor(page, 'P3-2', 0)
  await present(page, 0, 'P3-2')
  await page.locator('[data-action="close-pass-early"]').click()
  await expect.poll(() => cursorOf(page)).toMatchObject({ stage: 'present', pass: '' })
  expect(await page.getByTestId('pass-list').innerText()).toContain('1 of 3 steps presented')
  await page.locator('[data-action="to-tryout"]').click()

  // Stage 3: try-out performance.
  await expect.poll(() => cursorOf(page)).toMatchObject({ stage: 'tryout', pass: '' })
  await expectRunnerScreen(page, viewport, '3-tryout-overview')
  await page.locator('[data-action="start-pass"]').click()
  await waitForCursor(page, 'T1-1', 0)
  await expectRunnerScreen(page, viewport, '3-tryout-T1')
  await mark(page, 'unaided', 0, 'T1-1')
  await mark(page, 'cued', 1, 'T1-1')
  await mark(page, 'missed', 2, 'T1-1', true)
  await expect(page.getByTestId('pass-score').innerText()).resolves.toBe('Pass score 50 — 3 of 3 marked')
  // Undo takes back the last mark (a new event); the card goes back to it.
  await page.locator('[data-action="undo"]').click()
  await expect.poll(() => page.getByTestId('pass-score').innerText()).toBe('Pass score 50 — 2 of 3 marked')
  await expect.poll(() => page.locator('[data-strip="2"]').innerText()).toContain('Not yet')
  await mark(page, 'unaided', 2, 'T1-1', true)
  await expect(page.getByTestId('pass-score').innerText()).resolves.toBe('Pass score 83.3 — 3 of 3 marked')
  await closeAndExpect(page, 'T2-1')

  // T2: the learner names step 2 first; the coach taps it, then step 1, takes that back, and "All in order".
  await page.locator('[data-order="2"]').click()
  await expect.poll(() => page.locator('[data-order="2"]').innerText()).toContain('Named 1st')
  await waitForCursor(page, 'T2-1', 1)
  await page.locator('[data-order="1"]').click()
  await expect.poll(() => page.locator('[data-order="1"]').innerText()).toContain('Named 2nd')
  await expect(page.getByTestId('order-score').innerText()).resolves.toBe('Order score 0 — 2 of 3 named')
  await expectRunnerScreen(page, viewport, '3-tryout-T2')
  await page.locator('[data-action="undo"]').click()
  await expect.poll(() => page.locator('[data-order="1"]').innerText()).toContain('Not named')
  await page.locator('[data-action="all-in-order"]').click()
  await expect.poll(() => page.getByTestId('order-score').innerText()).toBe('Order score 100 — 3 of 3 named')
  await page.locator('[data-strip="0"]').click()
  await waitForCursor(page, 'T2-1', 0)
  await mark(page, 'unaided', 0, 'T2-1')
  await mark(page, 'unaided', 1, 'T2-1')
  await mark(page, 'unaided', 2, 'T2-1', true)
  await closeAndExpect(page, 'T3-1')

  // T3: two marks, then the tablet reloads (a crash, a closed tab) in the middle of the pass.
  await expect(page.getByTestId('card-text').innerText()).resolves.toBe('Own padlock on the isolator')
  await expectRunnerScreen(page, viewport, '3-tryout-T3')
  await mark(page, 'cued', 0, 'T3-1')
  await mark(page, 'unaided', 1, 'T3-1')
  await expect.poll(() => page.getByTestId('save-state').innerText()).toBe('Saved on this tablet')
  await page.reload()
  await waitForHydration(page)
  await waitForCursor(page, 'T3-1', 2)
  await expect.poll(() => cursorOf(page)).toEqual({ stage: 'tryout', pass: 'T3-1', index: 2 })
  expect(await page.locator('[data-strip="0"]').innerText()).toContain('Cued')
  expect(await page.locator('[data-strip="1"]').innerText()).toContain('Unaided')
  expect(await page.locator('[data-strip="2"]').innerText()).toContain('Not yet')
  expect(await page.getByTestId('pass-score').innerText()).toBe('Pass score 50 — 2 of 3 marked')
  expect(await page.getByTestId('card-text').innerText()).toBe('Lift both latches together')
  await mark(page, 'unaided', 2, 'T3-1', true)
  await closeAndExpect(page, 'T4-1')
  expect(await page.getByTestId('card-text').innerText()).toBe('Own padlock on the isolator')
  expect(await page.locator('article.lesson-card').innerText()).toContain('Nobody else can start the drive')
  await expectRunnerScreen(page, viewport, '3-tryout-T4')
  await mark(page, 'unaided', 0, 'T4-1')
  await mark(page, 'unaided', 1, 'T4-1', true)
  await page.locator('[data-action="close-pass"]').click()
  await expect.poll(() => cursorOf(page)).toMatchObject({ stage: 'tryout', pass: '' })
  // The safety key point needed a cue: another pass, then a clean T3.
  expect(await page.getByTestId('tryout-suggestion').innerText()).toContain('another pass (1 to re-present)')
  await expectRunnerScreen(page, viewport, '3-tryout-summary')
  await page.locator('[data-action="add-tryout-pass"]').click()
  await page.locator('[data-add-pass="T3"]').click()
  await waitForCursor(page, 'T3-2', 0)
  for (let i = 0; i < 3; i++) await mark(page, 'unaided', i, 'T3-2', i === 2)
  await page.locator('[data-action="close-pass"]').click()
  await expect.poll(() => page.getByTestId('tryout-suggestion').innerText()).toContain('ready to work alone')
  await page.locator('[data-action="to-followup"]').click()

  // Stage 4: follow up.
  await expect.poll(() => cursorOf(page)).toMatchObject({ stage: 'followup' })
  expect(await page.getByTestId('readiness').innerText()).toBe('Fourfold suggests: ready to work alone')
  expect(await page.getByTestId('recall-score').innerText()).toBe('100')
  await expectRunnerScreen(page, viewport, '4-followup')
  await page.locator('[data-decision="ready"]').click()
  await expect.poll(() => page.locator('[data-decision="ready"]').getAttribute('aria-pressed')).toBe('true')
  await page.getByLabel('Who the learner goes to for help').fill('Dana, shift lead')
  await page.getByLabel('Who the learner goes to for help').blur()
  await page.getByLabel('Sign on the screen').check()
  const pad = page.getByTestId('signature-pad')
  await pad.scrollIntoViewIfNeeded()
  const box = (await pad.boundingBox())!
  await page.mouse.move(box.x + 40, box.y + 100)
  await page.mouse.down()
  for (let x = 40; x < 300; x += 20) await page.mouse.move(box.x + x, box.y + 100 + Math.sin(x / 20) * 30)
  await page.mouse.up()
  await page.locator('[data-action="save-ack"]').click()
  await expect.poll(() => page.getByTestId('acknowledged').innerText()).toContain('Acknowledged by Ilse Brannagh')
  await expectRunnerScreen(page, viewport, '4-followup-acknowledged')
  await page.locator('[data-action="sign-off"]').click()
  await page.locator('[data-action="confirm-sign-off"]').click()
  await expect.poll(() => page.getByTestId('signed-off').isVisible()).toBe(true)
  expect(await page.getByTestId('read-only').innerText()).toContain('no longer changed')
  expect(await page.getByTestId('first-check').innerText()).toContain('First spot check:')
  await expectRunnerScreen(page, viewport, '4-followup-signed-off')

  // Read-only after sign-off, also after a reload: no marks can be made.
  await page.reload()
  await waitForHydration(page)
  await expect.poll(() => page.getByTestId('signed-off').isVisible()).toBe(true)
  await page.locator('[data-stage="tryout"]').click()
  await expect.poll(() => cursorOf(page)).toMatchObject({ stage: 'tryout' })
  expect(await page.locator('[data-mark]').count()).toBe(0)
  expect(await page.locator('[data-action="start-pass"], [data-action="add-tryout-pass"]').count()).toBe(0)

  return lessonId
}

/** Checks every event of the lesson in IndexedDB, and replays them against the breakdown. */
async function checkRecord(page: Page, lessonId: string, content: BreakdownContent, offline: boolean) {
  const events = (await idbRows<LessonEvent & { synced: number }>(page, 'events')).filter(e => e.lessonId === lessonId)
  const steps = content.units[0]!.steps
  const [s1, s2, s3] = steps.map(s => s.id)
  const [k1, k2, k3] = steps.flatMap(s => s.keyPoints).map(k => k.id)
  // P1-1 5, P2-1 5, P3-1 5, P3-2 3, T1-1 7, T2-1 9, T3-1 5, T4-1 4, T3-2 5 = 48 events.
  expect(events).toHaveLength(48)
  const byPass = (pass: string) => events.filter(e => e.pass === pass).sort((a, b) => a.seq - b.seq).map(e => [e.kind, e.elementId, e.kind === 'undo' ? 'undo' : e.value])
  const opened = (pass: string, body: unknown[][]) => [['pass-open', null, null], ...body, ['pass-close', null, null]]
  const presented = (ids: string[]) => ids.map(id => ['present', id, null])
  expect(byPass('P1-1')).toEqual(opened('P1-1', presented([s1!, s2!, s3!])))
  expect(byPass('P2-1')).toEqual(opened('P2-1', presented([s1!, s2!, s3!])))
  expect(byPass('P3-1')).toEqual(opened('P3-1', presented([s1!, s2!, s3!])))
  expect(byPass('P3-2')).toEqual(opened('P3-2', presented([s1!])))
  expect(byPass('T1-1')).toEqual(opened('T1-1', [['mark', s1, 'unaided'], ['mark', s2, 'cued'], ['mark', s3, 'missed'], ['undo', s3, 'undo'], ['mark', s3, 'unaided']]))
  expect(byPass('T2-1')).toEqual(opened('T2-1', [['order', s2, null], ['order', s1, null], ['undo', s1, 'undo'], ['order-all', null, null], ['mark', s1, 'unaided'], ['mark', s2, 'unaided'], ['mark', s3, 'unaided']]))
  expect(byPass('T3-1')).toEqual(opened('T3-1', [['mark', k1, 'cued'], ['mark', k2, 'unaided'], ['mark', k3, 'unaided']]))
  expect(byPass('T4-1')).toEqual(opened('T4-1', [['mark', k1, 'unaided'], ['mark', k3, 'unaided']]))
  expect(byPass('T3-2')).toEqual(opened('T3-2', [['mark', k1, 'unaided'], ['mark', k2, 'unaided'], ['mark', k3, 'unaided']]))

  // Each undo names the event it takes back: T1's "missed", T2's second order tap.
  const undoT1 = events.find(e => e.pass === 'T1-1' && e.kind === 'undo')!
  expect(events.find(e => e.id === undoT1.value)).toMatchObject({ pass: 'T1-1', kind: 'mark', elementId: s3, value: 'missed' })
  const undoT2 = events.find(e => e.pass === 'T2-1' && e.kind === 'undo')!
  expect(events.find(e => e.id === undoT2.value)).toMatchObject({ pass: 'T2-1', kind: 'order', elementId: s1 })

  // One device, its sequence 1…48 in tapping order; with the network off nothing has left the tablet.
  expect(new Set(events.map(e => e.deviceId)).size).toBe(1)
  expect(events.map(e => e.seq).sort((a, b) => a - b)).toEqual(Array.from({ length: 48 }, (_, i) => i + 1))
  if (offline) expect(events.every(e => e.synced === 0)).toBe(true)

  // The same replay the server will run gives the scores the tablet showed.
  const state = replayLesson(events, content)
  expect(state.scores).toEqual({ T1: 83.3, T2: 100, T3: 100, T4: 100, order: 100, recall: 100 })
  expect(state.readiness).toEqual({ suggestion: 'ready', represent: [] })
  expect(state.passes.find(p => p.key === 'T3-1')!.score).toBe(83.3)

  const [lesson] = (await idbRows<Record<string, any>>(page, 'lessons')).filter(l => l.id === lessonId)
  expect(lesson).toMatchObject({ place: 'Slicer 2', helper: 'Dana, shift lead', decision: 'ready', cursor: { stage: 'followup', pass: null, index: 0 } })
  expect(Object.values(lesson!.prepare).filter((p: any) => p.done)).toHaveLength(7)
  expect(lesson!.prepare['worker:ease']).toEqual({ done: true, note: 'Talked about the night shift first' })
  expect(lesson!.acknowledgement.name).toBe('Ilse Brannagh')
  expect(lesson!.acknowledgement.signature).toMatch(/^data:image\/png;base64,/)
  expect(typeof lesson!.signedOffAt).toBe('number')
  for (const stage of ['prepare', 'present', 'tryout', 'followup']) expect(lesson!.stageSeconds[stage], `time in ${stage}`).toBeGreaterThan(0)
}

describe.each(TABLET_VIEWPORTS)('lesson runner at $name', (viewport) => {
  it('runs a whole lesson through the four stages, resumes after a reload in T3, and keeps every mark in IndexedDB', async () => {
    const setup = await setUpOrganisation(`${viewport.width}x${viewport.height}`)
    const { context, page, pageErrors } = await openContext(browser, server.url, viewport)
    try {
      const lessonId = await runLesson(context, page, viewport, setup, false)
      await checkRecord(page, lessonId, setup.content, false)
      expect(pageErrors).toEqual([])
    }
    finally {
      await context.close()
    }
  }, 240_000)

  it.runIf(OFFLINE_SUPPORT)('runs the same lesson with the network off after the first visit', async () => {
    const setup = await setUpOrganisation(`offline ${viewport.width}x${viewport.height}`)
    const { context, page, pageErrors } = await openContext(browser, server.url, viewport, { serviceWorkers: 'allow' })
    try {
      const lessonId = await runLesson(context, page, { ...viewport, name: `${viewport.name} offline`, width: viewport.width, height: viewport.height }, setup, true)
      await checkRecord(page, lessonId, setup.content, true)

      // Back online (issue 5): Today sends what is waiting, shows it reached the server with the
      // server's score, and the review page shows the score the server computed.
      await visit(page, '/')
      await expect.poll(() => page.getByTestId('sync-waiting').innerText()).toMatch(/Waiting to send: 48 marks/)
      await context.setOffline(false)
      await expect.poll(() => page.getByTestId('sync-waiting').innerText(), { timeout: 20_000 }).toBe('Nothing waiting: everything on this tablet is on the server.')
      await page.screenshot({ path: `/tmp/lesson-runner-${viewport.width}x${viewport.height}-5-synced.png`, fullPage: true })
      const finished = page.locator(`[data-lesson="${lessonId}"]`)
      await expect.poll(() => finished.getByTestId('finished-state').innerText(), { timeout: 20_000 }).toContain('On the server: recall score 100, ready to work alone')
      const events = (await idbRows<LessonEvent & { synced: number }>(page, 'events')).filter(e => e.lessonId === lessonId)
      expect(events.every(e => e.synced === 1)).toBe(true)
      await finished.getByRole('link', { name: /Review/ }).click()
      await page.waitForURL(`**/lessons/review/${lessonId}`)
      await expect.poll(() => page.getByTestId('recall').innerText()).toBe('100')
      expect(await page.getByTestId('server-scores').innerText()).toContain('Fourfold\'s suggestion: Ready to work alone')
      await page.screenshot({ path: `/tmp/lesson-runner-${viewport.width}x${viewport.height}-6-review.png`, fullPage: true })
      expect(await axeViolations(page), 'axe on the lesson review').toEqual([])
      expect(pageErrors).toEqual([])
    }
    finally {
      await context.close()
    }
  }, 240_000)

  it('says so when the tablet has no breakdowns yet, and points to Today', async () => {
    const admin = await signUp(server, `Empty Bakery ${viewport.width}`)
    const { context, page } = await openContext(browser, server.url, viewport)
    try {
      const login = await context.request.post('/api/auth/login', { data: { email: admin.email, password: PASSWORD } })
      expect(login.status()).toBe(200)
      await visit(page, '/lessons/new')
      await expect.poll(() => page.getByTestId('no-breakdowns').isVisible()).toBe(true)
      expect(await page.getByRole('link', { name: 'Go to Today to refresh tablet data' }).getAttribute('href')).toBe('/')
      expect(await axeViolations(page)).toEqual([])
    }
    finally {
      await context.close()
    }
  })
})

// A page rendered in the browser (the runner, starting a lesson) must know who is signed in before
// it opens. nuxt-auth-utils asks GET /api/_auth/session first; the app asks GET /api/me beside it
// (plugins/0.ask-me-early.client.ts), not after it, so the page waits one round trip, not two.
// Checked by holding the session answer until /api/me has been asked (5 s at most): asked only
// after the session, the order comes out the other way round.
describe('a lesson page loaded afresh', () => {
  it('asks who is signed in beside the session request, then opens as usual', async () => {
    const admin = await signUp(server, 'Millbrook Ovens start')
    const coach = await addMember(server, admin.client, 'coach')
    const { context, page, pageErrors } = await openContext(browser, server.url, TABLET_VIEWPORTS[0]!)
    try {
      const login = await context.request.post('/api/auth/login', { data: { email: coach.email, password: PASSWORD } })
      expect(login.status()).toBe(200)

      const order: string[] = []
      let meAsked = () => {}
      const meSeen = new Promise<void>(resolve => (meAsked = resolve))
      page.on('request', (request) => {
        if (new URL(request.url()).pathname === '/api/me') {
          order.push('me asked')
          meAsked()
        }
      })
      await page.route(url => url.pathname === '/api/_auth/session', async (route) => {
        await Promise.race([meSeen, new Promise(resolve => setTimeout(resolve, 5000))])
        order.push('session answered')
        await route.continue()
      })

      // A fresh load of a browser-rendered page (/lessons/** is rendered in the browser).
      await visit(page, '/lessons/new')
      await expect.poll(() => page.getByRole('heading', { level: 1 }).innerText()).toBe('Start a lesson')
      expect(order.slice(0, 2)).toEqual(['me asked', 'session answered'])
      // Asked once for the page: the middleware took the early answer instead of asking again.
      expect(order.filter(step => step === 'me asked')).toHaveLength(1)
      expect(pageErrors).toEqual([])
    }
    finally {
      await context.close()
    }
  })
})
