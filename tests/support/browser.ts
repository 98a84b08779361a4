// Real Chromium for the browser project: Debian's package driven by playwright-core.
// A browser download does not work here, so the executable is always the system one.
import { readFileSync } from 'node:fs'
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core'
import { uniqueAddress } from './http'

export interface Viewport { name: string, width: number, height: number }

/** The two tablet shapes the design is for (10", landscape and portrait). */
export const TABLET_LANDSCAPE: Viewport = { name: 'tablet landscape 1024×768', width: 1024, height: 768 }
export const TABLET_PORTRAIT: Viewport = { name: 'tablet portrait 768×1024', width: 768, height: 1024 }
export const TABLET_VIEWPORTS = [TABLET_LANDSCAPE, TABLET_PORTRAIT]

export function launchBrowser(): Promise<Browser> {
  return chromium.launch({
    executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium',
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
  })
}

export interface OpenedContext { context: BrowserContext, page: Page, pageErrors: Error[] }

/**
 * A fresh context (its own cookies and storage, like another device) at a viewport, aimed at
 * the test server. Each context claims its own client address through X-Forwarded-For (the
 * test server trusts it), so sign-in throttling in one scenario never reaches another.
 * Uncaught page errors are collected so a test can insist there were none.
 * Service workers are blocked unless `serviceWorkers: 'allow'` (the offline tests need them).
 */
export async function openContext(browser: Browser, baseURL: string, viewport: Viewport, options: { hasTouch?: boolean, serviceWorkers?: 'allow' | 'block' } = {}): Promise<OpenedContext> {
  const context = await browser.newContext({
    baseURL,
    viewport: { width: viewport.width, height: viewport.height },
    deviceScaleFactor: 1,
    hasTouch: options.hasTouch ?? true,
    locale: 'en-GB',
    timezoneId: 'Europe/London',
    serviceWorkers: options.serviceWorkers ?? 'block',
    extraHTTPHeaders: { 'x-forwarded-for': uniqueAddress() },
  })
  context.setDefaultTimeout(15_000)
  context.setDefaultNavigationTimeout(30_000)
  const page = await context.newPage()
  const pageErrors: Error[] = []
  page.on('pageerror', error => pageErrors.push(error))
  return { context, page, pageErrors }
}

/**
 * Waits until Nuxt has hydrated the server-rendered page. Before that a click or a submit
 * reaches plain HTML (a form would post itself as a GET), so forms must wait for this.
 */
export async function waitForHydration(page: Page): Promise<void> {
  await page.waitForFunction(() => {
    const root = document.querySelector('#__nuxt') as (Element & { __vue_app__?: { config: { globalProperties: { $nuxt?: { isHydrating?: boolean } } } } }) | null
    const nuxtApp = root?.__vue_app__?.config.globalProperties.$nuxt
    return Boolean(nuxtApp) && nuxtApp!.isHydrating === false
  })
}

/** Navigates and waits for hydration: the page is then ready for a person to use. */
export async function visit(page: Page, path: string): Promise<void> {
  await page.goto(path)
  await waitForHydration(page)
}

/** Moves within the app the way a link would (client-side router, route middleware runs in the browser). */
export async function routerPush(page: Page, path: string): Promise<void> {
  await page.evaluate(async (to) => {
    const root = document.querySelector('#__nuxt') as (Element & { __vue_app__?: { config: { globalProperties: { $router?: { push: (to: string) => Promise<unknown> } } } } }) | null
    await root?.__vue_app__?.config.globalProperties.$router?.push(to)
  }, path)
}

export interface TargetProblem { role: string, name: string, width: number, height: number }

/**
 * Every visible button and link on the page that is smaller than the given size.
 * Visually hidden elements (the sr-only pattern: a 1×1 clipped box, such as a skip link
 * before it has focus) are not on-screen targets and are left out.
 */
export async function smallTargets(page: Page, min = 44): Promise<{ checked: number, problems: TargetProblem[] }> {
  return page.evaluate((minimum) => {
    const targets = [...document.querySelectorAll<HTMLElement>('a[href], button, [role="button"], [role="link"], input[type="submit"], input[type="button"]')]
    const problems: TargetProblem[] = []
    let checked = 0
    for (const el of targets) {
      const style = getComputedStyle(el)
      const box = el.getBoundingClientRect()
      const hidden = style.visibility === 'hidden' || style.display === 'none' || box.width === 0 || box.height === 0
      const visuallyHidden = box.width <= 1 && box.height <= 1
      if (hidden || visuallyHidden) continue
      checked += 1
      if (box.width < minimum || box.height < minimum) {
        problems.push({ role: el.tagName.toLowerCase(), name: (el.innerText || el.getAttribute('aria-label') || '').trim(), width: Math.round(box.width), height: Math.round(box.height) })
      }
    }
    return { checked, problems }
  }, min)
}

/** Whether the page is wider than its viewport (something forces a sideways scroll). */
export async function overflowsSideways(page: Page): Promise<boolean> {
  return page.evaluate(() => document.documentElement.scrollWidth > document.documentElement.clientWidth)
}

/**
 * Runs a test tool's script file (axe-core) in the page. Not page.addScriptTag: that inserts an
 * inline <script>, which the app's Content-Security-Policy refuses (it has no nonce). Evaluated over
 * the DevTools protocol instead, as a person's console would, so the page's policy stays as it is.
 */
export async function addToolScript(page: Page, path: string): Promise<void> {
  await page.evaluate(readFileSync(path, 'utf8'))
}

/** Every row of one store of the tablet's IndexedDB, read with the raw API (not through the app). */
export async function idbRows<T>(page: Page, store: string): Promise<T[]> {
  return page.evaluate(name => new Promise<T[]>((resolve, reject) => {
    const open = indexedDB.open('fourfold')
    open.onerror = () => reject(open.error)
    open.onsuccess = () => {
      const db = open.result
      if (!db.objectStoreNames.contains(name)) {
        db.close()
        resolve([])
        return
      }
      const req = db.transaction(name, 'readonly').objectStore(name).getAll()
      req.onsuccess = () => {
        db.close()
        resolve(req.result as T[])
      }
      req.onerror = () => reject(req.error)
    }
  }), store)
}
