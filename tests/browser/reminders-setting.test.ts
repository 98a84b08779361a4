// The account page's "E-mail me a daily digest" switch, in real Chromium at both tablet shapes:
// a coach turns it off and on, the server keeps it, axe-core finds no WCAG 2.2 AA violation, and a
// learner (who never gets a digest) is not offered it. Screenshots go to /tmp for a look.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser } from 'playwright-core'
import { PASSWORD, addMember, signUp } from '../support/accounts'
import { TABLET_VIEWPORTS, launchBrowser, openContext, overflowsSideways, smallTargets, visit } from '../support/browser'
import { startServer, type TestServer } from '../support/server'
import { axeViolations } from '../support/axe'

let server: TestServer
let browser: Browser
let coachEmail: string
let learnerEmail: string

beforeAll(async () => {
  server = await startServer()
  browser = await launchBrowser()
  const admin = await signUp(server, 'Crumbs & Co')
  coachEmail = (await addMember(server, admin.client, 'coach')).email
  learnerEmail = (await addMember(server, admin.client, 'learner')).email
}, 120_000)

afterAll(async () => {
  await browser?.close()
  await server?.stop()
})

describe.each(TABLET_VIEWPORTS)('the digest switch at $name', (viewport) => {
  it('a coach turns the daily digest off and on again; the server keeps it', async () => {
    const { context, page, pageErrors } = await openContext(browser, server.url, viewport)
    try {
      expect((await context.request.post('/api/auth/login', { data: { email: coachEmail, password: PASSWORD } })).status()).toBe(200)
      const digestOn = async () => ((await (await context.request.get('/api/me')).json()) as { settings: { digestEmails: boolean } }).settings.digestEmails
      await visit(page, '/account')
      const toggle = page.getByRole('checkbox', { name: 'E-mail me a daily digest' })
      await expect.poll(() => toggle.isChecked()).toBe(true)

      await toggle.click()
      await expect.poll(() => page.getByTestId('digest-setting').getByRole('status').textContent()).toContain('The daily digest is off')
      expect(await digestOn()).toBe(false)
      await page.screenshot({ path: `/tmp/fourfold-account-digest-${viewport.width}x${viewport.height}.png`, fullPage: true })
      expect(await axeViolations(page), 'axe on the account page').toEqual([])
      expect((await smallTargets(page, 44)).problems).toEqual([])
      expect(await overflowsSideways(page)).toBe(false)

      // A fresh load shows what the server has.
      await visit(page, '/account')
      await expect.poll(() => toggle.isChecked()).toBe(false)
      await toggle.click()
      await expect.poll(() => page.getByTestId('digest-setting').getByRole('status').textContent()).toContain('You will get the daily digest')
      expect(await digestOn()).toBe(true)
      expect(pageErrors).toEqual([])
    }
    finally {
      await context.close()
    }
  })
})

describe('a learner', () => {
  it('is not offered the digest, which only coaches and admins get', async () => {
    const { context, page } = await openContext(browser, server.url, TABLET_VIEWPORTS[0]!)
    try {
      expect((await context.request.post('/api/auth/login', { data: { email: learnerEmail, password: PASSWORD } })).status()).toBe(200)
      await visit(page, '/account')
      await expect.poll(() => page.getByRole('heading', { level: 1, name: 'Account' }).isVisible()).toBe(true)
      expect(await page.getByTestId('digest-setting').count()).toBe(0)
    }
    finally {
      await context.close()
    }
  })
})
