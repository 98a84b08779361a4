// The Content-Security-Policy in real Chromium: the main screens of every role, online and from the
// offline shell, report no violation. Chromium fires `securitypolicyviolation` on the document and
// logs "Refused to … because it violates the following Content Security Policy directive" for
// everything the policy blocks (CSP Level 3, §5.3 "Report a violation"); both are watched. The
// service worker, the web manifest link, IndexedDB (Dexie), the lazily loaded chart.js and the tablet's
// blob: photos all run under the policy here. A positive control (an injected inline script) shows
// the watch does see a violation.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, BrowserContext, Page } from 'playwright-core'
import { PASSWORD, addMember, signUp } from '../support/accounts'
import { TABLET_LANDSCAPE, launchBrowser, openContext, visit, waitForHydration } from '../support/browser'
import { photoForm } from '../support/photos'
import { linkedLearner, spotCheck, teach } from '../support/people'
import { startServer, type TestServer } from '../support/server'
import type { BreakdownContent } from '../../shared/schemas/breakdown'
import type { Client } from '../support/http'

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

const VIOLATION_MARK = '[csp-violation]'

/**
 * Every violation the pages of this context report, whichever document they happen in: the init
 * script runs before any page script in every new document and logs each event to the console.
 */
async function watchViolations(context: BrowserContext, page: Page): Promise<string[]> {
  const seen: string[] = []
  await context.addInitScript((mark) => {
    document.addEventListener('securitypolicyviolation', (e) => {
      console.error(`${mark} ${e.effectiveDirective} blocked ${e.blockedURI || '(inline)'} at ${e.sourceFile || document.location.pathname}:${e.lineNumber}`)
    })
  }, VIOLATION_MARK)
  page.on('console', (message) => {
    const text = message.text()
    if (text.startsWith(VIOLATION_MARK) || /Content Security Policy/i.test(text)) seen.push(`${new URL(page.url()).pathname}: ${text}`)
  })
  return seen
}

async function job(admin: Client, photoId: string): Promise<{ jobId: string, versionId: string, content: BreakdownContent }> {
  const content: BreakdownContent = {
    units: [{
      id: randomUUID(),
      title: '',
      steps: [
        { id: randomUUID(), text: 'Stop and lock out the slicer', photoId, keyPoints: [{ id: randomUUID(), kind: 'safety', text: 'Own padlock on the isolator', reason: 'Nobody else can start the drive', photoId: null }] },
        { id: randomUUID(), text: 'Fit the new blade set', photoId: null, keyPoints: [{ id: randomUUID(), kind: 'quality', text: 'Seat both frame pins', reason: 'A half-seated set tears loaves', photoId: null }] },
      ],
    }],
  }
  const created = await admin.post('/api/jobs', { title: 'Change the slicer blade set', hazards: [{ category: 'sharp-edges', description: 'Blade set' }] })
  const draft = await admin.post(`/api/jobs/${created.body.id}/versions`)
  await admin.patch(`/api/versions/${draft.body.id}`, { revision: 0, content })
  const published = await admin.post(`/api/versions/${draft.body.id}/publish`, { changeNote: 'First version.' })
  if (published.status !== 200) throw new Error(`publish: ${published.status} ${published.text}`)
  return { jobId: created.body.id as string, versionId: draft.body.id as string, content }
}

async function signIn(page: Page, email: string) {
  await visit(page, '/sign-in')
  await page.getByLabel('E-mail address').fill(email)
  await page.getByLabel('Password').fill(PASSWORD)
  await page.getByRole('button', { name: 'Sign in' }).click()
  await page.waitForURL(url => url.pathname === '/')
  await waitForHydration(page)
}

async function open(page: Page, path: string) {
  const res = await page.goto(path)
  expect(res?.status(), path).toBeLessThan(400)
  await waitForHydration(page)
}

describe('Content-Security-Policy in Chromium', () => {
  it('the watch sees a violation when there is one (an inline script without the nonce)', async () => {
    const { context, page } = await openContext(browser, server.url, TABLET_LANDSCAPE)
    try {
      const seen = await watchViolations(context, page)
      await visit(page, '/sign-in')
      const ran = await page.evaluate(() => {
        const script = document.createElement('script')
        script.textContent = 'window.__injected = true'
        document.head.append(script)
        return (window as unknown as { __injected?: boolean }).__injected === true
      })
      expect(ran).toBe(false)
      await expect.poll(() => seen.length).toBeGreaterThan(0)
      expect(seen.join('\n')).toContain('script-src')
    }
    finally {
      await context.close()
    }
  })

  it('the main screens of an admin, a coach and a learner report none, online and offline', async () => {
    const admin = await signUp(server, 'Hollowmere Bakery CSP')
    const coach = await addMember(server, admin.client, 'coach')
    const ilse = await linkedLearner(server, admin.client, 'Ilse Brannagh')
    const photo = await admin.client.post('/api/uploads', photoForm())
    expect(photo.status).toBe(201)
    const slicer = { learnerId: ilse.learnerId, ...(await job(admin.client, photo.body.id)) }
    const { lessonId } = await teach(coach, slicer, { daysAgo: 3, decision: 'ready' })
    await spotCheck(coach, slicer, { daysAgo: 1, lessonId })

    const { context, page, pageErrors } = await openContext(browser, server.url, TABLET_LANDSCAPE, { serviceWorkers: 'allow' })
    try {
      const seen = await watchViolations(context, page)
      await signIn(page, admin.email)
      // The service worker registers and takes charge (worker-src), the tablet downloads into Dexie.
      await page.waitForFunction(() => navigator.serviceWorker.controller !== null, undefined, { timeout: 60_000 })
      const tablet = page.getByRole('region', { name: 'This tablet', exact: true })
      await expect.poll(() => tablet.innerText(), { timeout: 30_000 }).toContain('Works offline: yes')
      expect(await page.locator('link[rel="manifest"]').count()).toBeGreaterThan(0)

      for (const path of ['/jobs', `/jobs/${slicer.jobId}`, `/versions/${slicer.versionId}`, `/versions/${slicer.versionId}/edit`, `/versions/${slicer.versionId}/print`, '/people', '/plan', '/records', `/lessons/review/${lessonId}`, `/lessons/review/${lessonId}/print`, '/lessons/new', '/checks/new', '/account', '/settings', '/settings/members']) {
        await open(page, path)
      }
      // chart.js arrives lazily with the learner's page and draws its canvas.
      await open(page, `/people/${ilse.learnerId}`)
      const canvas = page.getByTestId('recall-chart').locator('canvas')
      await expect.poll(() => canvas.count()).toBe(1)
      await expect.poll(() => canvas.evaluate(c => (c as HTMLCanvasElement).width)).toBeGreaterThan(200)

      // Offline: Today and a lesson open from the precached shell under its own cached policy.
      await open(page, '/')
      await context.setOffline(true)
      await page.reload()
      await waitForHydration(page)
      await expect.poll(() => page.getByTestId('offline-banner').innerText()).toContain('No connection.')
      await page.goto('/lessons/new')
      await waitForHydration(page)
      await context.setOffline(false)

      // A coach's Today, and a learner's own cards with their photo drawn from the device (blob:).
      await page.goto('/')
      await page.getByRole('button', { name: 'Sign out' }).click()
      await page.waitForURL(url => url.pathname === '/sign-in')
      await signIn(page, coach.email)
      await signOutThenIn(page, ilse.email)
      await open(page, '/study')
      await open(page, `/study/${slicer.versionId}`)
      const photos = page.locator('[data-testid="study-photo"]')
      await expect.poll(() => photos.evaluateAll(imgs => imgs.some(i => (i as HTMLImageElement).naturalWidth > 0 && (i as HTMLImageElement).src.startsWith('blob:'))), { timeout: 30_000 }).toBe(true)

      expect(seen).toEqual([])
      expect(pageErrors.map(e => e.message)).toEqual([])
    }
    finally {
      await context.close()
    }
  })
})

async function signOutThenIn(page: Page, email: string) {
  await page.getByRole('button', { name: 'Sign out' }).click()
  await page.waitForURL(url => url.pathname === '/sign-in')
  await signIn(page, email)
}
