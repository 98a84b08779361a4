// Offline after one online visit, in real Chromium at both tablet shapes: a coach signs in once
// with the network on; the service worker takes charge and the tablet downloads the published
// breakdown (with its photo), the roster and who is signed in. With the network off, Today and
// "Start a lesson" still open from the cached shell and read IndexedDB, screens that need the
// server say so, /api/ is never answered with the shell, and Cache Storage holds no signed-in page.
import { randomUUID } from 'node:crypto'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { PASSWORD, addMember, signUp } from '../support/accounts'
import { TABLET_VIEWPORTS, launchBrowser, openContext, overflowsSideways, smallTargets, visit, waitForHydration } from '../support/browser'
import { photoForm } from '../support/photos'
import { startServer, type TestServer } from '../support/server'
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

/** A job with a published breakdown whose first step has a photo, made through the API as a person would. */
async function publishedJob(admin: Client, title: string) {
  const photo = await admin.post('/api/uploads', photoForm())
  expect(photo.status, photo.text).toBe(201)
  const job = await admin.post('/api/jobs', {
    title,
    purpose: 'Loaves of even shape and crumb.',
    hazards: [{ category: 'sharp-edges', description: 'Lame blade' }],
    ppe: ['Apron'],
    toolsAndMaterials: ['Bench scraper', 'Couche'],
    workplaceArrangement: 'Couche to the right of the bench.',
  })
  expect(job.status, job.text).toBe(201)
  const draft = await admin.post(`/api/jobs/${job.body.id}/versions`)
  expect(draft.status, draft.text).toBe(201)
  const content = {
    units: [{
      id: randomUUID(),
      title: '',
      steps: [
        { id: randomUUID(), text: 'Pre-shape the dough', photoId: photo.body.id, keyPoints: [{ id: randomUUID(), kind: 'quality', text: 'Seam side up', reason: 'So the skin stays tight', photoId: null }] },
        { id: randomUUID(), text: 'Roll out to length', photoId: null, keyPoints: [] },
      ],
    }],
  }
  const saved = await admin.patch(`/api/versions/${draft.body.id}`, { revision: 0, content })
  expect(saved.status, saved.text).toBe(200)
  const published = await admin.post(`/api/versions/${draft.body.id}/publish`, { changeNote: 'First version.' })
  expect(published.status, published.text).toBe(200)
  return { jobId: job.body.id as string, versionId: draft.body.id as string, photoId: photo.body.id as string }
}

interface TabletStore { versions: Array<{ id: string, job: { title: string } }>, learners: Array<{ name: string }>, photos: string[], member: { user: { email: string } } | null }

/** What IndexedDB holds, read with the plain IndexedDB API (not through the app's code). */
function readTablet(page: Page): Promise<TabletStore> {
  return page.evaluate(() => new Promise<TabletStore>((resolve, reject) => {
    const open = indexedDB.open('fourfold')
    open.onerror = () => reject(open.error)
    open.onsuccess = () => {
      const db = open.result
      const tx = db.transaction(['versions', 'learners', 'photos', 'meta'], 'readonly')
      const all = <T>(name: string) => new Promise<T[]>((ok) => {
        const req = tx.objectStore(name).getAll()
        req.onsuccess = () => ok(req.result as T[])
      })
      const keys = new Promise<string[]>((ok) => {
        const req = tx.objectStore('photos').getAllKeys()
        req.onsuccess = () => ok(req.result as string[])
      })
      const member = new Promise<TabletStore['member']>((ok) => {
        const req = tx.objectStore('meta').get('member')
        req.onsuccess = () => ok((req.result?.value as TabletStore['member']) ?? null)
      })
      Promise.all([all<TabletStore['versions'][number]>('versions'), all<TabletStore['learners'][number]>('learners'), keys, member])
        .then(([versions, learners, photos, remembered]) => {
          db.close()
          resolve({ versions, learners, photos: [...photos].sort(), member: remembered })
        }, reject)
    }
  }))
}

/** Writes one lesson record straight into IndexedDB, as the runner would have left it. */
function putLesson(page: Page, lesson: Record<string, unknown>): Promise<void> {
  return page.evaluate(record => new Promise<void>((resolve, reject) => {
    const open = indexedDB.open('fourfold')
    open.onerror = () => reject(open.error)
    open.onsuccess = () => {
      const db = open.result
      const tx = db.transaction('lessons', 'readwrite')
      tx.objectStore('lessons').put(record)
      tx.oncomplete = () => {
        db.close()
        resolve()
      }
      tx.onerror = () => reject(tx.error)
    }
  }), lesson)
}

/** Every HTML page in Cache Storage, by path (a shared tablet must keep only the shell). */
function cachedPages(page: Page): Promise<Array<{ path: string, body: string }>> {
  return page.evaluate(async () => {
    const pages: Array<{ path: string, body: string }> = []
    for (const name of await caches.keys()) {
      const cache = await caches.open(name)
      for (const request of await cache.keys()) {
        const response = await cache.match(request)
        if (response?.headers.get('content-type')?.includes('text/html')) pages.push({ path: new URL(request.url).pathname, body: await response.text() })
      }
    }
    return pages
  })
}

/**
 * Runs in the page before its scripts: notes every Intl object made and every locale-aware string
 * method called (`window.intlUsed`), each still doing its work.
 */
function recordIntlUse() {
  const used: string[] = []
  ;(window as unknown as { intlUsed: string[] }).intlUsed = used
  for (const name of ['DateTimeFormat', 'NumberFormat', 'Collator', 'PluralRules', 'RelativeTimeFormat', 'ListFormat'] as const) {
    const Real = Intl[name] as unknown as new (...args: unknown[]) => object
    ;(Intl as unknown as Record<string, unknown>)[name] = new Proxy(Real, {
      construct(target, args) {
        used.push(`Intl.${name}`)
        return Reflect.construct(target, args)
      },
      apply(target, self, args) {
        used.push(`Intl.${name}`)
        return Reflect.apply(target as unknown as (...a: unknown[]) => unknown, self, args)
      },
    })
  }
  const methods: Array<[object, string]> = [[String.prototype, 'localeCompare'], [Date.prototype, 'toLocaleString'], [Date.prototype, 'toLocaleDateString'], [Date.prototype, 'toLocaleTimeString'], [Number.prototype, 'toLocaleString']]
  for (const [proto, method] of methods) {
    const real = (proto as Record<string, (...a: unknown[]) => unknown>)[method]!
    Object.defineProperty(proto, method, {
      configurable: true,
      writable: true,
      value: function (this: unknown, ...args: unknown[]) {
        used.push(method)
        return real.apply(this, args)
      },
    })
  }
}

describe.each(TABLET_VIEWPORTS)('offline at $name', (viewport) => {
  it('after one online visit, Today and starting a lesson open with the network off, from IndexedDB', async () => {
    const size = `${viewport.width}x${viewport.height}`
    const admin = await signUp(server, `Hollowmere Bakery ${size}`)
    const coach = await addMember(server, admin.client, 'coach')
    const jobTitle = `Shape baguettes ${size}`
    const learnerName = `Ilse Brannagh ${size}`
    const { jobId, versionId, photoId } = await publishedJob(admin.client, jobTitle)
    const learner = await admin.client.post('/api/learners', { name: learnerName, reference: 'HB-7' })
    expect(learner.status, learner.text).toBe(201)

    const { context, page, pageErrors } = await openContext(browser, server.url, viewport, { serviceWorkers: 'allow' })
    try {
      // Online, once: sign in as the coach.
      await visit(page, '/sign-in')
      await page.getByLabel('E-mail address').fill(coach.email)
      await page.getByLabel('Password').fill(PASSWORD)
      // Every download of the breakdown list from here on, and the tablet's first pull of changes.
      const jobListDownloads: string[] = []
      page.on('request', (request) => {
        if (new URL(request.url()).pathname === '/api/jobs') jobListDownloads.push(request.url())
      })
      // The first pull is held until the download that signing in starts has finished: the order a
      // slow line gives, where a pull that counted its full list as news downloaded everything again.
      let releasePull = () => {}
      const pullHeld = new Promise<void>(resolve => (releasePull = resolve))
      await page.route(url => url.pathname === '/api/sync', async (route) => {
        if (route.request().method() === 'GET') await pullHeld
        await route.continue()
      })
      const firstPull = page.waitForResponse(response => new URL(response.url()).pathname === '/api/sync' && response.request().method() === 'GET', { timeout: 60_000 })
      await page.getByRole('button', { name: 'Sign in' }).click()
      await page.waitForURL(url => url.pathname === '/')
      await waitForHydration(page)

      // The service worker takes charge of this page (no reload needed), and the tablet data arrives.
      await page.waitForFunction(() => navigator.serviceWorker.controller !== null, undefined, { timeout: 60_000 })
      const tablet = page.getByRole('region', { name: 'This tablet', exact: true })
      await expect.poll(() => tablet.innerText(), { timeout: 30_000 }).toContain('Breakdowns on this tablet: 1, updated')
      await expect.poll(() => tablet.innerText()).toContain('People on the roster: 1. Photos: 1.')
      await expect.poll(() => tablet.innerText()).toContain('Works offline: yes')
      expect(await tablet.innerText()).toMatch(/Storage kept: (yes|no)\./)
      // Downloaded once: the first pull lists everything the server has, which the download that
      // signing in started already fetched, so it starts no second one.
      releasePull()
      await firstPull
      await page.waitForLoadState('networkidle')
      expect(jobListDownloads).toHaveLength(1)

      const stored = await readTablet(page)
      expect(stored.versions.map(v => [v.id, v.job.title])).toEqual([[versionId, jobTitle]])
      expect(stored.learners.map(l => l.name)).toEqual([learnerName])
      expect(stored.photos).toEqual([`${photoId}:full`, `${photoId}:thumb`])
      expect(stored.member?.user.email).toBe(coach.email)
      expect(await page.getByTestId('offline-banner').count()).toBe(0)

      // A lesson left in the middle of T3 on this tablet (written the way the runner keeps it).
      const lessonId = randomUUID()
      await putLesson(page, {
        id: lessonId, organisationId: admin.organisationId, coachUserId: coach.userId, learnerId: learner.body.id, jobId, versionId,
        place: 'Bench 2', startedAt: Date.now() - 600_000, updatedAt: Date.now(), cursor: { stage: 'tryout', pass: 'T3-1', index: 1 },
        prepare: {}, helper: '', decision: null, acknowledgement: null, signedOffAt: null, stageSeconds: {}, synced: 0,
      })
      // Today opens without any Intl object: the first one a page makes loads the browser's locale
      // data (about 40 ms of main thread here, 4× that on a slow tablet) while the screen opens.
      await page.addInitScript(recordIntlUse)
      await page.reload()
      await waitForHydration(page)
      const lessons = page.getByRole('region', { name: 'Lessons in progress on this tablet' })
      await expect.poll(() => lessons.innerText()).toContain(learnerName)
      await expect.poll(() => tablet.innerText()).toContain('Breakdowns on this tablet: 1, updated')
      expect(await page.evaluate(() => (window as unknown as { intlUsed: string[] }).intlUsed)).toEqual([])
      // Reloading a moment after the download does not start another one.
      await expect.poll(() => tablet.getByRole('button', { name: 'Refresh tablet data' }).isEnabled(), { timeout: 30_000 }).toBe(true)
      await page.screenshot({ path: `/tmp/offline-today-online-${size}.png`, fullPage: true })

      // Network off. Reload Today: the shell answers, the remembered sign-in opens it.
      await context.setOffline(true)
      await page.reload()
      await waitForHydration(page)
      await expect.poll(() => page.getByRole('heading', { level: 1 }).innerText()).toMatch(/^Good (morning|afternoon|evening), Test coach$/)
      await expect.poll(() => page.getByTestId('offline-banner').innerText()).toContain('No connection.')
      await expect.poll(() => tablet.innerText()).toContain('Breakdowns on this tablet: 1, updated')
      expect(await tablet.innerText()).toContain('Refreshing needs a connection.')
      await expect.poll(() => lessons.innerText()).toContain(learnerName)
      const row = lessons.getByRole('listitem').filter({ hasText: learnerName })
      expect(await row.innerText()).toContain(`${jobTitle} · version 1`)
      expect(await row.innerText()).toContain('Stage: Try-out performance, pass T3')
      expect(await row.getByRole('link', { name: `Resume the lesson with ${learnerName}: ${jobTitle}` }).getAttribute('href')).toBe(`/lessons/${lessonId}`)
      expect(await lessons.getByRole('link', { name: 'Start a lesson' }).getAttribute('href')).toBe('/lessons/new')
      const { problems } = await smallTargets(page, 44)
      expect(problems).toEqual([])
      expect(await overflowsSideways(page)).toBe(false)
      await page.screenshot({ path: `/tmp/offline-today-offline-${size}.png`, fullPage: true })

      // Start a lesson, opened by a navigation with the network off: learner and job from IndexedDB.
      await page.goto('/lessons/new')
      await waitForHydration(page)
      await expect.poll(() => page.locator('body').innerText(), { timeout: 15_000 }).toContain(learnerName)
      await expect.poll(() => page.locator('body').innerText()).toContain(jobTitle)
      await expect.poll(() => page.getByTestId('offline-banner').innerText()).toContain('No connection.')

      // A screen that needs the server says so, and the API is never answered with the shell.
      await page.goto('/jobs')
      await waitForHydration(page)
      await expect.poll(() => page.getByRole('heading', { level: 1 }).innerText()).toBe('The jobs list needs a connection')
      const apiTab = await context.newPage()
      await expect(apiTab.goto('/api/me')).rejects.toThrow(/ERR_INTERNET_DISCONNECTED/)
      await apiTab.close()

      // A shared tablet keeps no signed-in page: the only HTML in Cache Storage is the shell, with no one's data.
      const pagesInCache = await cachedPages(page)
      expect(pagesInCache.map(p => p.path)).toEqual(['/app-shell'])
      expect(pagesInCache[0]!.body).not.toContain(coach.email)
      expect(pagesInCache[0]!.body).not.toContain('Test coach')

      // Back online: the waiting screen goes on by itself, and the banner goes.
      await context.setOffline(false)
      await page.waitForURL(url => url.pathname === '/jobs', { timeout: 15_000 })
      await expect.poll(() => page.getByTestId('offline-banner').count()).toBe(0)

      // Signing out forgets the member on the tablet; the downloaded data stays for the next coach.
      await page.getByRole('button', { name: 'Sign out' }).click()
      await page.waitForURL(url => url.pathname === '/sign-in')
      await expect.poll(async () => (await readTablet(page)).member).toBeNull()
      expect((await readTablet(page)).versions).toHaveLength(1)
      expect(pageErrors).toEqual([])
    }
    finally {
      await context.close()
    }
  })
})
