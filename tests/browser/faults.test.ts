// Two faults the coach meets on the tablet, in real Chromium against the built server.
//  1. The browser's storage quota reached in the middle of a try-out: the runner says so in words
//     ("Not saved", and what to do), the marks recorded before stay in IndexedDB and on screen
//     after a reload, and marking works again once there is room. Chromium's own quota is capped
//     through the DevTools protocol (Storage.overrideQuotaForOrigin); Chromium checks it against
//     a per-origin allowance it works out at the origin's first IndexedDB use, so the cap is set
//     before the first visit, lowered to the usage after the marks, and one large write (the
//     storage filling up) makes Chromium read it again.
//  2. The database write lock held by another process while the tablet syncs: the push is refused
//     with 503 and Retry-After, the tablet keeps its outbox, says it will try again, and does so
//     after the delay the server gave; every mark reaches the server exactly once.
import { createClient, type Transaction } from '@libsql/client'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, CDPSession, Page } from 'playwright-core'
import { PASSWORD, addMember, signUp } from '../support/accounts'
import { idbRows, launchBrowser, openContext, TABLET_LANDSCAPE, visit, waitForHydration, type OpenedContext } from '../support/browser'
import { publishedJob, rosterLearner } from '../support/breakdowns'
import { startServer, type TestServer } from '../support/server'
import { sql } from '../support/db'

let server: TestServer
let browser: Browser
let opened: OpenedContext
let page: Page
let cdp: CDPSession
let setup: { coachEmail: string, versionId: string, learnerId: string }
let lessonId = ''

/** The quota Chromium works with before the storage fills: far above what the lesson needs. */
const ROOMY_QUOTA = 50 * 1024 * 1024

beforeAll(async () => {
  server = await startServer()
  browser = await launchBrowser()
  const admin = await signUp(server, 'Harbour Bakery faults')
  const coach = await addMember(server, admin.client, 'coach')
  const job = await publishedJob(admin.client)
  const learnerId = await rosterLearner(coach.client, 'Tamsin Oake')
  setup = { coachEmail: coach.email, versionId: job.versionId, learnerId }
  opened = await openContext(browser, server.url, TABLET_LANDSCAPE)
  page = opened.page
  cdp = await opened.context.newCDPSession(page)
  // Before the origin's first IndexedDB use (see the top of the file).
  await cdp.send('Storage.overrideQuotaForOrigin', { origin: server.url, quotaSize: ROOMY_QUOTA })
})

afterAll(async () => {
  await browser?.close()
  await server?.stop()
})

interface StoredEvent { id: string, lessonId: string, pass: string, kind: string, elementId: string | null, value: string | null, seq: number, synced: number }
const lessonMarks = async () => (await idbRows<StoredEvent>(page, 'events')).filter(e => e.lessonId === lessonId && e.kind === 'mark').sort((a, b) => a.seq - b.seq).map(e => e.value)

const cursorOf = () => page.locator('main#main').evaluate(el => ({ stage: el.getAttribute('data-stage'), pass: el.getAttribute('data-pass'), index: Number(el.getAttribute('data-index')) }))
const waitForCursor = (pass: string, index: number) => expect.poll(cursorOf).toMatchObject({ pass, index })

async function present(at: number, pass: string, last = false) {
  await page.locator('[data-action="presented"]').click()
  await expect.poll(() => page.locator(`[data-strip="${at}"]`).innerText()).toContain('Presented')
  if (!last) await waitForCursor(pass, at + 1)
}

async function mark(value: 'unaided' | 'cued' | 'missed', at: number) {
  await page.locator(`[data-mark="${value}"]`).click()
  const word = { unaided: 'Unaided', cued: 'Cued', missed: 'Missed' }[value]
  await expect.poll(() => page.locator(`[data-strip="${at}"]`).innerText()).toContain(word)
}

describe('the tablet\'s storage full', () => {
  it('says so on the runner, keeps every earlier mark through a reload, and marks again once there is room', async () => {
    const login = await opened.context.request.post('/api/auth/login', { data: { email: setup.coachEmail, password: PASSWORD } })
    expect(login.status()).toBe(200)
    await visit(page, '/')
    await expect.poll(async () => (await idbRows<{ id: string }>(page, 'versions')).map(v => v.id), { timeout: 20_000 }).toEqual([setup.versionId])

    await visit(page, '/lessons/new')
    await page.getByLabel('Type the learner\'s name').fill('tamsin')
    await page.locator('[data-pick="learner"]').filter({ hasText: 'Tamsin Oake' }).click()
    await page.getByLabel('Type the job\'s title').fill('slicer')
    await page.locator('[data-pick="job"]').filter({ hasText: 'Change the slicer blade set' }).click()
    await page.getByRole('button', { name: 'Start the lesson' }).click()
    await page.waitForURL(url => /^\/lessons\/[0-9a-f-]{36}$/.test(url.pathname))
    await waitForHydration(page)
    lessonId = new URL(page.url()).pathname.split('/').pop()!

    // Present the operation (P1–P3), then the try-out's first pass.
    await page.locator('[data-action="to-present"]').click()
    await page.locator('[data-action="start-pass"]').click()
    // Closing a pass opens the next standard one; after P3 the stage's overview.
    for (const [pass, next] of [['P1-1', 'P2-1'], ['P2-1', 'P3-1'], ['P3-1', '']] as const) {
      await waitForCursor(pass, 0)
      for (let i = 0; i < 3; i++) await present(i, pass, i === 2)
      await page.locator('[data-action="close-pass"]').click()
      if (!next) await expect.poll(cursorOf).toMatchObject({ stage: 'present', pass: '' })
    }
    await page.locator('[data-action="to-tryout"]').click()
    await page.locator('[data-action="start-pass"]').click()
    await waitForCursor('T1-1', 0)
    await mark('unaided', 0)
    await mark('cued', 1)
    await expect.poll(() => page.getByTestId('save-state').innerText()).toBe('Saved on this tablet')
    expect(await lessonMarks()).toEqual(['unaided', 'cued'])

    // The storage fills: the quota comes down to what is used, and a large write meets it.
    const { usage } = await cdp.send('Storage.getUsageAndQuota', { origin: server.url })
    await cdp.send('Storage.overrideQuotaForOrigin', { origin: server.url, quotaSize: usage })
    const filled = await page.evaluate(size => new Promise<string>((resolve) => {
      const open = indexedDB.open('storage-filler', 1)
      open.onupgradeneeded = () => open.result.createObjectStore('blobs')
      open.onsuccess = () => {
        const tx = open.result.transaction('blobs', 'readwrite')
        const bytes = new Uint8Array(size)
        for (let i = 0; i < size; i += 65_536) crypto.getRandomValues(bytes.subarray(i, Math.min(size, i + 65_536)))
        tx.objectStore('blobs').put(bytes, 'video')
        tx.oncomplete = () => resolve('stored')
        tx.onabort = () => resolve(tx.error?.name ?? 'aborted')
      }
    }), ROOMY_QUOTA + 1024 * 1024)
    expect(filled).toBe('QuotaExceededError')

    // The next mark is refused: the runner says so in words, and the mark is not shown as made.
    await page.locator('[data-mark="missed"]').click()
    await expect.poll(() => page.getByTestId('save-state').innerText()).toContain('Not saved')
    const alert = page.getByRole('alert').filter({ hasText: 'storage is full' })
    await expect.poll(() => alert.innerText()).toContain('This tablet\'s storage is full. Everything recorded before it is safe on this tablet: sync now')
    expect(await page.locator('[data-strip="2"]').innerText()).toContain('Not yet')
    await page.screenshot({ path: '/tmp/faults-storage-full.png' })
    expect(await lessonMarks()).toEqual(['unaided', 'cued'])

    // A reload with the storage still full: everything recorded before is there.
    await page.reload()
    await waitForHydration(page)
    await waitForCursor('T1-1', 2)
    expect(await page.locator('[data-strip="0"]').innerText()).toContain('Unaided')
    expect(await page.locator('[data-strip="1"]').innerText()).toContain('Cued')
    expect(await page.locator('[data-strip="2"]').innerText()).toContain('Not yet')
    expect(await lessonMarks()).toEqual(['unaided', 'cued'])

    // Room again: the same tap goes in.
    await cdp.send('Storage.overrideQuotaForOrigin', { origin: server.url })
    await page.evaluate(() => new Promise(resolve => (indexedDB.deleteDatabase('storage-filler').onsuccess = resolve)))
    await mark('missed', 2)
    await expect.poll(() => page.getByTestId('save-state').innerText()).toBe('Saved on this tablet')
    expect(await lessonMarks()).toEqual(['unaided', 'cued', 'missed'])
  })
})

describe('the database write lock held by another process while the tablet syncs', () => {
  let held: Transaction | undefined
  afterAll(() => held?.close())

  it('keeps the outbox, waits the Retry-After the server gave, and then sends every mark once', async () => {
    expect(lessonId).not.toBe('')
    const holder = createClient({ url: server.databaseUrl })
    held = await holder.transaction('write')

    const pushes: Array<{ at: number, status: number, retryAfter: string | null }> = []
    page.on('response', (res) => {
      if (res.request().method() === 'POST' && new URL(res.url()).pathname === '/api/sync') pushes.push({ at: Date.now(), status: res.status(), retryAfter: res.headers()['retry-after'] ?? null })
    })
    const pushStarts: number[] = []
    page.on('request', (req) => {
      if (req.method() === 'POST' && new URL(req.url()).pathname === '/api/sync') pushStarts.push(Date.now())
    })

    // Today syncs as it opens; the push meets the lock and is refused.
    await visit(page, '/')
    await expect.poll(() => pushes.length, { timeout: 20_000 }).toBeGreaterThan(0)
    expect(pushes[0]).toMatchObject({ status: 503, retryAfter: '5' })
    const problem = page.getByTestId('sync-panel')
    await expect.poll(() => problem.innerText()).toContain('The server is busy just now. Everything stays on this tablet. It is sent again by itself in 5 seconds.')
    await problem.screenshot({ path: '/tmp/faults-sync-busy.png' })
    // The outbox is intact: the lesson's marks are still waiting on the tablet.
    const waiting = (await idbRows<StoredEvent>(page, 'events')).filter(e => e.lessonId === lessonId)
    expect(waiting.length).toBeGreaterThan(3)
    expect(waiting.some(e => e.synced === 0)).toBe(true)
    expect(await page.getByTestId('sync-waiting').innerText()).toMatch(/^Waiting to send: /)

    await held.rollback()
    held = undefined
    holder.close()

    // The tablet tries again by itself, not before the delay it was given, and the push goes in.
    await expect.poll(() => page.getByTestId('sync-waiting').innerText(), { timeout: 30_000 }).toBe('Nothing waiting: everything on this tablet is on the server.')
    expect(pushStarts.length).toBeGreaterThanOrEqual(2)
    expect(pushStarts[1]! - pushes[0]!.at).toBeGreaterThanOrEqual(4500)
    expect(pushes.at(-1)!.status).toBe(200)

    const onTablet = (await idbRows<StoredEvent>(page, 'events')).filter(e => e.lessonId === lessonId)
    expect(onTablet.every(e => e.synced === 1)).toBe(true)
    const stored = await sql(server.databaseUrl, 'select count(*) as n, count(distinct id) as d from lesson_events where lesson_id = ?', [lessonId])
    expect(Number(stored.rows[0]!.n)).toBe(onTablet.length)
    expect(Number(stored.rows[0]!.d)).toBe(onTablet.length)
    expect(opened.pageErrors.filter(e => !/quota|storage/i.test(e.message))).toEqual([])
  })
})
