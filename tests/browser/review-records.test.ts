// The lesson review, the second coach's screen, the printable training record and the Records page
// in real Chromium at both tablet shapes. A lesson is sent by its coach's tablet (POST /api/sync); a
// second coach opens its review, marks the same try-out on /lessons/<id>/observe by touch, sends the
// marks, and the review then says how far the two agree (Cohen's kappa, computed here with the same
// shared rule from the marks both sent). The record prints to an A4 PDF. The Records page is
// filtered, sorted and paged with touch and keyboard. axe-core (WCAG 2.2 AA rules) on every screen;
// screenshots go to /tmp/fourfold-screens for a person to look at.
import { randomUUID } from 'node:crypto'
import { mkdir, writeFile } from 'node:fs/promises'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, BrowserContext, Page } from 'playwright-core'
import { TABLET_VIEWPORTS, launchBrowser, openContext, overflowsSideways, smallTargets, visit, type Viewport } from '../support/browser'
import { startServer, type TestServer } from '../support/server'
import { addMember, PASSWORD, signUp } from '../support/accounts'
import { publishedJob, rosterLearner, slicerContent } from '../support/breakdowns'
import { agreementWords, observerAgreement } from '../../shared/utils/agreement'
import type { LessonEvent } from '../../shared/utils/lesson-events'
import { axeViolations } from '../support/axe'

const SHOTS = '/tmp/fourfold-screens'
// A 1×1 PNG: the learner's signature as the signature pad would send it.
const SIGNATURE = 'data:image/png;base64,iVBORw0KGgoAAAANSUhEUgAAAAEAAAABCAQAAAC1HAwCAAAAC0lEQVR42mNkYAAAAAYAAjCB0C8AAAAASUVORK5CYII='

let server: TestServer
let browser: Browser
let admin: Awaited<ReturnType<typeof signUp>>
let coach: Awaited<ReturnType<typeof addMember>>
let second: Awaited<ReturnType<typeof addMember>>
let auditor: Awaited<ReturnType<typeof addMember>>
let job: Awaited<ReturnType<typeof publishedJob>>
let otherJob: Awaited<ReturnType<typeof publishedJob>>
const learners: Record<string, string> = {}
const lessonIds: string[] = []

/** A lesson as the coach's tablet sends it: T1–T4 marked, some cued, one missed, steps named in order. */
function recordedLesson(lessonId: string, deviceId: string, content = job.content, start = Date.UTC(2026, 10, 3, 9)) {
  const steps = content.units.flatMap(u => u.steps)
  const kps = steps.flatMap(s => s.keyPoints)
  let seq = 0
  const ev = (pass: string, kind: string, elementId: string | null, value: string | null) => {
    seq += 1
    return { id: randomUUID(), lessonId, pass, elementId, kind, value, clientTime: start + seq * 1000, deviceId, seq }
  }
  return [
    ...steps.map((s, i) => ev('T1-1', 'mark', s.id, i === 1 ? 'cued' : 'unaided')),
    ev('T1-1', 'pass-close', null, null),
    ev('T2-1', 'order', steps[0]!.id, null),
    ev('T2-1', 'order', steps[2]!.id, null),
    ev('T2-1', 'order', steps[1]!.id, null),
    ...steps.map(s => ev('T2-1', 'mark', s.id, 'unaided')),
    ev('T2-1', 'pass-close', null, null),
    ...kps.map((k, i) => ev('T3-1', 'mark', k.id, i === 0 ? 'cued' : i === 2 ? 'missed' : 'unaided')),
    ev('T3-1', 'pass-close', null, null),
    ...kps.map(k => ev('T4-1', 'mark', k.id, 'unaided')),
    ev('T4-1', 'pass-close', null, null),
  ]
}

async function sendLesson(learnerId: string, options: { jobOf?: typeof job, start?: number, decision?: 'ready' | 'another-pass', by?: typeof coach } = {}) {
  const j = options.jobOf ?? job
  const by = options.by ?? coach
  const start = options.start ?? Date.UTC(2026, 10, 3, 9)
  const id = randomUUID()
  const deviceId = randomUUID()
  const lesson = {
    id, coachUserId: by.userId, learnerId, jobId: j.jobId, versionId: j.versionId, place: 'Slicer 2', startedAt: start, updatedAt: start + 3_600_000,
    prepare: { 'worker:ease': { done: true, note: 'Talked about last week\'s shift first' }, 'ready:workplace': { done: true, note: '' } },
    helper: 'Odile on the bake line', decision: options.decision ?? 'another-pass', signedOffAt: start + 3_600_000,
    acknowledgement: { name: 'Ilse Brannagh', signature: SIGNATURE, at: start + 3_600_000 },
    stageSeconds: { prepare: 95, present: 610, tryout: 840, followup: 45 },
  }
  const res = await by.client.post('/api/sync', { deviceId, lessons: [lesson], events: recordedLesson(id, deviceId, j.content, start), checks: [] })
  if (res.status !== 200 || res.body.rejected.length) throw new Error(`sync: ${res.status} ${res.text}`)
  lessonIds.push(id)
  return id
}

beforeAll(async () => {
  server = await startServer()
  browser = await launchBrowser()
  await mkdir(SHOTS, { recursive: true })
  admin = await signUp(server, 'Hollowmere Review Bakery')
  coach = await addMember(server, admin.client, 'coach')
  second = await addMember(server, admin.client, 'coach')
  auditor = await addMember(server, admin.client, 'auditor')
  job = await publishedJob(admin.client, slicerContent(), 'Change the slicer blade set')
  otherJob = await publishedJob(admin.client, slicerContent(), 'Thread film on the bag sealer')
  learners.ilse = await rosterLearner(admin.client, 'Ilse Brannagh')
  learners.matthias = await rosterLearner(admin.client, 'Matthias Quennell')
  learners.yusra = await rosterLearner(admin.client, 'Yusra Delacroix-Behn')
  // Thirty records in November: enough for two pages of 25.
  for (let i = 0; i < 30; i++) {
    const learnerId = [learners.matthias, learners.yusra, learners.ilse][i % 3]!
    await sendLesson(learnerId, { jobOf: i % 2 ? otherJob : job, start: Date.UTC(2026, 10, 1 + (i % 28), 8 + (i % 5)), decision: i % 4 ? 'ready' : 'another-pass', by: i % 5 ? coach : second })
  }
}, 240_000)

afterAll(async () => {
  await browser?.close()
  await server?.stop()
})

async function signIn(context: BrowserContext, email: string) {
  const login = await context.request.post('/api/auth/login', { data: { email, password: PASSWORD } })
  expect(login.status()).toBe(200)
}

const shot = (page: Page, viewport: Viewport, name: string) => page.screenshot({ path: `${SHOTS}/review-records-${viewport.width}x${viewport.height}-${name}.png`, fullPage: true })

describe.each(TABLET_VIEWPORTS)('review and records at $name', (viewport) => {
  it('a second coach marks the try-out on their tablet and the review shows the two coaches\' kappa', async () => {
    const lessonId = await sendLesson(learners.ilse!, { start: Date.UTC(2026, 10, 20 + (viewport.width === 1024 ? 0 : 1), 9) })
    const observer = await openContext(browser, server.url, viewport)
    try {
      await signIn(observer.context, second.email)
      await visit(observer.page, `/lessons/review/${lessonId}`)
      await expect.poll(() => observer.page.getByTestId('recall').innerText()).not.toBe('')
      // No second coach yet: no agreement section.
      expect(await observer.page.getByTestId('agreement').count()).toBe(0)
      await observer.page.getByRole('link', { name: 'Mark as second coach' }).click()
      await observer.page.waitForURL(`**/lessons/${lessonId}/observe`)
      await expect.poll(() => observer.page.getByTestId('observer-progress').innerText()).toBe('You marked 0 of 3 in this pass.')
      expect(await axeViolations(observer.page), 'axe on the second coach\'s screen').toEqual([])
      expect((await smallTargets(observer.page)).problems).toEqual([])

      // T1 run 1: the second coach saw step 2 done unaided (the coach had it cued), the rest alike.
      const steps = job.content.units[0]!.steps
      const tap = async (elementId: string, value: string) => {
        await observer.page.locator(`li[data-element="${elementId}"] button[data-mark="${value}"]`).tap()
        await expect.poll(() => observer.page.locator(`li[data-element="${elementId}"] button[data-mark="${value}"]`).getAttribute('aria-pressed')).toBe('true')
      }
      await tap(steps[0]!.id, 'unaided')
      await tap(steps[1]!.id, 'missed')
      // Changed their mind: take it back and mark again.
      await observer.page.getByRole('button', { name: 'Take back my last mark in this pass' }).tap()
      await expect.poll(() => observer.page.locator(`li[data-element="${steps[1]!.id}"] button[aria-pressed="true"]`).count()).toBe(0)
      await tap(steps[1]!.id, 'unaided')
      await tap(steps[2]!.id, 'unaided')
      // T3 run 1: the key points, one different from the coach's marks.
      await observer.page.locator('button[data-pass="T3-1"]').tap()
      const kps = steps.flatMap(s => s.keyPoints)
      await tap(kps[0]!.id, 'cued')
      await tap(kps[1]!.id, 'unaided')
      await tap(kps[2]!.id, 'cued')
      await shot(observer.page, viewport, '1-second-coach')
      await expect.poll(() => observer.page.getByTestId('observer-waiting').innerText()).toMatch(/^8 of your marks are waiting to be sent/)
      await observer.page.getByRole('button', { name: 'Send now' }).tap()
      await expect.poll(async () => `${await observer.page.getByTestId('observer-waiting').innerText()} ${await observer.page.locator('#observer-send + *').evaluate(el => el.parentElement?.innerText ?? '')}`, { timeout: 20_000 }).toMatch(/^All your marks are on the server/)

      // What the review must say: the same rule, over what both tablets sent.
      const stored = await admin.client.get<{ events: Array<Omit<LessonEvent, 'lessonId'>> }>(`/api/lessons/${lessonId}`)
      const events = stored.body.events.map(e => ({ ...e, lessonId }))
      expect(events.filter(e => e.kind === 'observer-mark')).toHaveLength(7)
      const expected = observerAgreement(events, job.content)
      // Pairs: T1 unaided/unaided, cued/unaided, unaided/unaided; T3 cued/cued, unaided/unaided, missed/cued.
      expect(expected.n).toBe(6)
      expect(expected.confusion).toEqual([[3, 0, 0], [1, 1, 0], [0, 1, 0]])

      await observer.page.getByRole('link', { name: 'Back to the review' }).click()
      await observer.page.waitForURL(`**/lessons/review/${lessonId}`)
      await expect.poll(() => observer.page.getByTestId('agreement-words').innerText()).toBe(agreementWords(expected))
      expect(await observer.page.getByTestId('agreement-words').innerText()).toMatch(/^Agreement between the two coaches: κ = 0\.\d\d, (slight|fair|moderate|substantial) \(6 marks compared/)
      expect(await observer.page.locator(`td[data-pass="T1-1"][data-element="${steps[1]!.id}"]`).innerText()).toMatch(/Cued\s+Second coach: Unaided/)
      expect(observer.pageErrors).toEqual([])
    }
    finally {
      await observer.context.close()
    }

    // The auditor reads the whole review: marks, pass scores, order, readiness and why, notes, times, acknowledgement.
    const { context, page, pageErrors } = await openContext(browser, server.url, viewport)
    try {
      await signIn(context, auditor.email)
      await visit(page, `/lessons/review/${lessonId}`)
      await expect.poll(() => page.getByTestId('agreement-words').isVisible()).toBe(true)
      expect(await page.getByTestId('review-facts').innerText()).toMatch(/^Breakdown version 1 · coach Test coach · .* · Slicer 2$/)
      expect(await page.getByTestId('pass-score').allInnerTexts()).toEqual([
        expect.stringMatching(/^83\.3\s+closed$/), expect.stringMatching(/^100\s+order 66\.7\s+closed$/), expect.stringMatching(/^50\s+closed$/), expect.stringMatching(/^100\s+closed$/),
      ])
      expect(await page.getByTestId('readiness').innerText()).toBe('Fourfold\'s suggestion: Another pass. Coach\'s decision: Another pass.')
      const represent = await page.getByTestId('represent').innerText()
      // Safety first: the safety key point (cued) before the rest.
      expect(represent.split('\n')[0]).toBe('Safety: Key point · Own padlock on the isolator — safety point not told unaided')
      expect(represent).toContain('Key point · Seat both frame pins — missed')
      expect(represent).toContain('steps out of order')
      expect(await page.getByTestId('recited-order').innerText()).toMatch(/1\. Stop and lock out slicer\n3\. Fit the new blade set · out of place\n2\. Open the blade guard · out of place/)
      expect(await page.getByTestId('review-notes').innerText()).toContain('Note: Talked about last week\'s shift first')
      expect(await page.getByTestId('stage-times').innerText()).toBe('Prepare the worker: 2 min\nPresent the operation: 10 min\nTry-out performance: 14 min\nFollow up: 45 s\nWhole lesson: 27 min')
      expect(await page.getByTestId('acknowledgement').innerText()).toContain('Ilse Brannagh')
      expect(await page.getByTestId('signature').getAttribute('src')).toBe(SIGNATURE)
      // An auditor changes nothing: no second-coach link.
      expect(await page.getByRole('link', { name: 'Mark as second coach' }).count()).toBe(0)
      expect(await overflowsSideways(page)).toBe(false)
      await shot(page, viewport, '2-review')
      expect(await axeViolations(page), 'axe on the lesson review').toEqual([])
      expect((await smallTargets(page)).problems).toEqual([])

      // The printable training record: on screen, then as an A4 PDF.
      await page.getByRole('link', { name: 'Printable training record' }).click()
      await page.waitForURL(`**/lessons/review/${lessonId}/print`)
      await expect.poll(() => page.getByTestId('record-version').innerText()).toBe('Version 1')
      expect(await page.getByTestId('record-signoff').innerText()).toContain(`Breakdown version 1 · record ${lessonId}`)
      expect(await page.getByTestId('record-signoff').innerText()).toMatch(/Coach's signature and date[\s\S]*Learner's signature and date/)
      expect(await axeViolations(page), 'axe on the printable record').toEqual([])
      await shot(page, viewport, '3-record-screen')
      await page.emulateMedia({ media: 'print' })
      // Nothing of the screen's controls on paper.
      expect(await page.getByRole('button', { name: 'Print' }).isVisible()).toBe(false)
      await shot(page, viewport, '4-record-print')
      const pdf = await page.pdf({ format: 'A4', printBackground: true, preferCSSPageSize: true })
      await writeFile(`${SHOTS}/review-records-${viewport.width}x${viewport.height}-record.pdf`, pdf)
      const text = pdf.toString('latin1')
      expect(text.startsWith('%PDF-')).toBe(true)
      // A4 is 595 × 842 points (ISO 216: 210 × 297 mm).
      const sizes = [...text.matchAll(/\/MediaBox\s*\[\s*0 0 ([\d.]+) ([\d.]+)\s*\]/g)].map(m => [Math.round(Number(m[1])), Math.round(Number(m[2]))])
      expect(sizes.length).toBeGreaterThanOrEqual(1)
      expect(sizes.length).toBeLessThanOrEqual(4)
      for (const size of sizes) expect(size).toEqual([595, 842])
      await page.emulateMedia({ media: 'screen' })
      expect(pageErrors).toEqual([])
    }
    finally {
      await context.close()
    }
  }, 240_000)

  it('filters, sorts and pages the records, and exports the same filters as CSV', async () => {
    const { context, page, pageErrors } = await openContext(browser, server.url, viewport)
    try {
      await signIn(context, admin.email)
      await visit(page, '/records')
      await expect.poll(() => page.getByTestId('records-count').innerText()).toMatch(/^Records 1 to \d+ of \d+\.$/)
      const total = Number(/of (\d+)/.exec(await page.getByTestId('records-count').innerText())![1])
      expect(total).toBe(lessonIds.length)
      expect(await overflowsSideways(page)).toBe(false)
      await shot(page, viewport, '5-records')
      expect(await axeViolations(page), 'axe on the records').toEqual([])
      expect((await smallTargets(page)).problems).toEqual([])

      // Person by keyboard: focus the field, choose with the arrow keys as a select does.
      await page.locator('#f-person').focus()
      await page.locator('#f-person').selectOption({ label: 'Matthias Quennell' })
      await page.waitForURL(`**/records?learnerId=${learners.matthias}`)
      await expect.poll(() => page.getByTestId('records-count').innerText()).toBe('Records 1 to 10 of 10.')
      const names = await page.locator('[data-testid="records-table"] tbody tr td:nth-child(2)').allInnerTexts()
      expect(new Set(names)).toEqual(new Set(['Matthias Quennell']))
      // Job and outcome by touch, on top of the person.
      await page.locator('#f-job').selectOption({ label: 'Thread film on the bag sealer' })
      await page.locator('#f-outcome').selectOption({ label: 'Ready to work alone' })
      await expect.poll(() => page.getByTestId('records-csv').getAttribute('href')).toContain('outcome=ready')
      await expect.poll(() => page.getByTestId('records-count').innerText()).toBe('Records 1 to 5 of 5.')
      const csv = await page.getByTestId('records-csv').getAttribute('href')
      expect(csv).toContain(`learnerId=${learners.matthias}`)
      expect(csv).toContain(`jobId=${otherJob.jobId}`)
      expect(csv).toContain('outcome=ready')
      const download = await context.request.get(csv!)
      expect(download.status()).toBe(200)
      const lines = (await download.text()).replace(/^\uFEFF/, '').trim().split('\r\n')
      const shown = Number(/of (\d+)/.exec(await page.getByTestId('records-count').innerText())?.[1] ?? 0)
      expect(lines).toHaveLength(1 + shown)
      expect(lines.slice(1).every(l => l.includes('"Matthias Quennell"') && l.includes('"Thread film on the bag sealer"') && l.includes('"Ready to work alone"'))).toBe(true)
      await page.getByRole('button', { name: 'Clear the filters' }).tap()
      await expect.poll(() => page.getByTestId('records-count').innerText()).toBe(`Records 1 to ${Math.min(50, total)} of ${total}.`)

      // Sort by person: names in order; again: the other way.
      const personColumn = () => page.locator('[data-testid="records-table"] tbody tr td:nth-child(2)').allInnerTexts()
      await page.locator('button[data-sort="person"]').tap()
      await expect.poll(async () => (await personColumn())[0]).toBe('Ilse Brannagh')
      expect(await page.locator('th[aria-sort="ascending"]').innerText()).toMatch(/^Person/)
      const ascending = await personColumn()
      expect(ascending).toEqual([...ascending].sort())
      expect(ascending.at(-1)).toBe('Yusra Delacroix-Behn')
      await page.locator('button[data-sort="person"]').press('Enter')
      await expect.poll(async () => (await personColumn())[0]).toBe('Yusra Delacroix-Behn')
      expect(await page.locator('th[aria-sort="descending"]').innerText()).toMatch(/^Person/)

      // Pages of 25.
      await page.locator('#records-size').selectOption('25')
      await expect.poll(() => page.getByTestId('records-count').innerText()).toBe(`Records 1 to 25 of ${total}.`)
      const firstPage = await page.locator('[data-testid="records-table"] tbody tr').evaluateAll(rows => rows.map(r => r.getAttribute('data-record')))
      await page.getByTestId('records-next').tap()
      await expect.poll(() => page.getByTestId('records-count').innerText()).toBe(`Records 26 to ${total} of ${total}.`)
      const secondPage = await page.locator('[data-testid="records-table"] tbody tr').evaluateAll(rows => rows.map(r => r.getAttribute('data-record')))
      expect(secondPage).toHaveLength(total - 25)
      expect(secondPage.some(id => firstPage.includes(id))).toBe(false)
      await shot(page, viewport, '6-records-sorted-page-2')
      expect(await axeViolations(page), 'axe on the records, sorted, page 2').toEqual([])
      await page.getByTestId('records-previous').tap()
      await expect.poll(() => page.getByTestId('records-count').innerText()).toBe(`Records 1 to 25 of ${total}.`)
      expect(pageErrors).toEqual([])
    }
    finally {
      await context.close()
    }
  }, 240_000)
})
