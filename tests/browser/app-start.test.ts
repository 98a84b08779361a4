// A page rendered in the browser (the lesson runner, a spot check, starting a lesson) must know who is
// signed in before it opens. nuxt-auth-utils asks GET /api/_auth/session first; the app asks GET
// /api/me beside it (plugins/0.ask-me-early.client.ts), not after it, so the page waits one round
// trip, not two. Checked by holding the session answer until /api/me has been asked (5 s at most):
// asked only after the session, the order comes out the other way round.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { PASSWORD, addMember, signUp } from '../support/accounts'
import { TABLET_LANDSCAPE, launchBrowser, openContext, visit, waitForHydration } from '../support/browser'
import { startServer, type TestServer } from '../support/server'

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

describe('a page rendered in the browser', () => {
  it('asks who is signed in beside the session request, then opens as usual', async () => {
    const admin = await signUp(server, 'Millbrook Ovens start')
    const coach = await addMember(server, admin.client, 'coach')
    const { context, page, pageErrors } = await openContext(browser, server.url, TABLET_LANDSCAPE)
    try {
      await visit(page, '/sign-in')
      await page.getByLabel('E-mail address').fill(coach.email)
      await page.getByLabel('Password').fill(PASSWORD)
      await page.getByRole('button', { name: 'Sign in' }).click()
      await page.waitForURL(url => url.pathname === '/')
      await waitForHydration(page)

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
      await page.goto('/lessons/new')
      await waitForHydration(page)
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
