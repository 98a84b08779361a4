// The demo bakery (DESIGN.md §10, `npm run seed`) in a benchmark's server, and a coach's tablet in
// Chromium: signed in, its data downloaded by the app itself, a lesson and a spot check started from
// the tablet's copy the way a coach starts them. Used by the JS and Lighthouse budgets (tests/budgets/).
import { execFile } from 'node:child_process'
import { promisify } from 'node:util'
import { root } from './build.mjs'
import { expectJson, nextAddress } from './http.mjs'

export const DEMO_PASSWORD = 'bakery-demo-2026'
/** The demo accounts (server/db/demo-seed.ts, DESIGN.md §10). */
export const DEMO = { admin: 'admin@bakery.example', coach: 'coach@bakery.example', learner: 'learner@bakery.example', auditor: 'auditor@bakery.example' }

/** Seeds the demo organisation into a running server's database (the server has migrated it already). */
export async function seedDemo(server) {
  await promisify(execFile)(process.execPath, ['scripts/seed.mjs'], { cwd: root, env: { ...process.env, DATABASE_URL: server.databaseUrl, DEMO_PASSWORD } })
}

/** Signs a demo account in and returns its session cookie as { name, value }. */
export async function demoSession(server, email) {
  const res = await fetch(`${server.url}/api/auth/login`, {
    method: 'POST',
    headers: { 'content-type': 'application/json', 'x-forwarded-for': nextAddress() },
    body: JSON.stringify({ email, password: DEMO_PASSWORD }),
  })
  await expectJson(res, 200, `signing in ${email}`)
  const pair = res.headers.getSetCookie().map(c => c.split(';')[0]).find(c => c.startsWith('fourfold-session='))
  if (!pair) throw new Error(`signing in ${email} set no session cookie`)
  const eq = pair.indexOf('=')
  return { name: pair.slice(0, eq), value: pair.slice(eq + 1), header: pair }
}

/** GET as a signed-in account, the JSON answer. */
export async function getAs(server, session, path) {
  const res = await fetch(`${server.url}${path}`, { headers: { 'cookie': session.header, 'x-forwarded-for': nextAddress() } })
  return expectJson(res, 200, `GET ${path}`)
}

/** Puts a session cookie into a Playwright browser context. */
export async function signInContext(context, server, session) {
  await context.addCookies([{ name: session.name, value: session.value, url: server.url }])
}

/** Waits until the page (the app, at any screen) has hydrated. */
export async function hydrated(page) {
  await page.waitForFunction(() => {
    const nuxtApp = document.querySelector('#__nuxt')?.__vue_app__?.config.globalProperties.$nuxt
    return Boolean(nuxtApp) && nuxtApp.isHydrating === false
  }, undefined, { timeout: 30_000 })
}

// `base`: the server's address, for a browser context without a baseURL (Chromium's default
// context over CDP, which Lighthouse audits in).

/** Opens Today and waits until the app has downloaded the organisation's data to the tablet. */
export async function downloadTabletData(page, base = '') {
  await page.goto(`${base}/`)
  await page.getByText(/Breakdowns on this tablet: [1-9]/).waitFor({ timeout: 60_000 })
}

/**
 * Opens Today and waits until every lesson, spot check and mark on the tablet is on the server
 * (IndexedDB says synced) and the network is quiet: the state a coach's tablet is in between lessons.
 */
export async function settleTablet(page, base = '') {
  await downloadTabletData(page, base)
  await page.waitForFunction(() => new Promise((resolve) => {
    const open = indexedDB.open('fourfold')
    open.onerror = () => resolve(false)
    open.onsuccess = () => {
      const db = open.result
      const stores = ['lessons', 'events', 'checks', 'checkEvents'].filter(name => db.objectStoreNames.contains(name))
      const tx = db.transaction(stores, 'readonly')
      let waiting = 0
      for (const name of stores) {
        const count = tx.objectStore(name).index('synced').count(0)
        count.onsuccess = () => (waiting += count.result)
      }
      tx.oncomplete = () => {
        db.close()
        resolve(waiting === 0)
      }
      tx.onerror = () => resolve(false)
    }
  }), undefined, { timeout: 60_000, polling: 500 })
  await page.waitForLoadState('networkidle')
}

/** Starts a lesson from /lessons/new with the first learner and job on the tablet; returns its id. */
export async function startLesson(page, base = '') {
  await page.goto(`${base}/lessons/new`)
  await hydrated(page)
  await page.locator('[data-pick="learner"]').first().click()
  await page.locator('[data-pick="job"]').first().click()
  await page.getByRole('button', { name: 'Start the lesson' }).click()
  await page.waitForURL(url => /^\/lessons\/[0-9a-f-]{36}$/.test(url.pathname))
  return new URL(page.url()).pathname.split('/').pop()
}

/** Starts a spot check from /checks/new with the first learner and job on the tablet; returns its id. */
export async function startCheck(page, base = '') {
  await page.goto(`${base}/checks/new`)
  await hydrated(page)
  await page.locator('[data-pick="learner"]').first().click()
  await page.locator('[data-pick="job"]').first().click()
  await page.getByRole('button', { name: 'Start the spot check' }).click()
  await page.waitForURL(url => /^\/checks\/[0-9a-f-]{36}$/.test(url.pathname))
  return new URL(page.url()).pathname.split('/').pop()
}

/**
 * Moves a lesson on this tablet to the start of a stage, as if the coach had got there: the
 * runner reopens at its saved cursor (a pass is opened by the coach, so none is named here).
 */
export async function moveLessonTo(page, lessonId, stage) {
  await page.evaluate(({ lessonId, stage }) => new Promise((resolve, reject) => {
    const open = indexedDB.open('fourfold')
    open.onerror = () => reject(open.error)
    open.onsuccess = () => {
      const db = open.result
      const tx = db.transaction('lessons', 'readwrite', { durability: 'strict' })
      const store = tx.objectStore('lessons')
      const read = store.get(lessonId)
      read.onsuccess = () => {
        if (!read.result) return reject(new Error(`lesson ${lessonId} is not on this tablet`))
        store.put({ ...read.result, cursor: { stage, pass: null, index: 0 } })
      }
      tx.oncomplete = () => {
        db.close()
        resolve()
      }
      tx.onerror = () => reject(tx.error)
    }
  }), { lessonId, stage })
}
