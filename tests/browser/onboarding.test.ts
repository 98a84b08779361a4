// The foundation's first day, in real Chromium at both tablet shapes: someone sets up an
// organisation, invites a coach by e-mail, the coach joins from the mail's link, signs out
// and in again, and sees only what a coach may see while the server refuses the rest.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Browser, Page } from 'playwright-core'
import { PASSWORD, uniqueEmail } from '../support/accounts'
import { TABLET_VIEWPORTS, launchBrowser, openContext, overflowsSideways, routerPush, smallTargets, visit, waitForHydration } from '../support/browser'
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

function pathOf(page: Page) {
  return new URL(page.url()).pathname
}

async function waitForPath(page: Page, path: string) {
  await page.waitForURL(url => url.pathname === path)
  await waitForHydration(page)
}

/** Big enough to hit at arm's length and laid out within the screen's width. */
async function expectTabletFriendly(page: Page) {
  const { checked, problems } = await smallTargets(page, 44)
  expect(checked).toBeGreaterThan(0)
  expect(problems, `small targets on ${pathOf(page)}`).toEqual([])
  expect(await overflowsSideways(page), `sideways scroll on ${pathOf(page)}`).toBe(false)
}

describe.each(TABLET_VIEWPORTS)('onboarding at $name', (viewport) => {
  it('sign-in page: every button and link is at least 44×44 px, body text at least 18 px', async () => {
    const { context, page, pageErrors } = await openContext(browser, server.url, viewport)
    try {
      await visit(page, '/sign-in')
      await expect.poll(() => page.getByRole('heading', { level: 1, name: 'Sign in' }).isVisible()).toBe(true)

      const { checked, problems } = await smallTargets(page, 44)
      // The logo link, the submit button and the two links below the form.
      expect(checked).toBeGreaterThanOrEqual(4)
      expect(problems).toEqual([])

      const bodySize = await page.evaluate(() => Number.parseFloat(getComputedStyle(document.body).fontSize))
      expect(bodySize).toBeGreaterThanOrEqual(18)
      // Every paragraph and label of running text, not just the body default.
      const smallest = await page.evaluate(() => Math.min(...[...document.querySelectorAll('main p, main label, main a, main button, main input')]
        .map(el => Number.parseFloat(getComputedStyle(el).fontSize))))
      expect(smallest).toBeGreaterThanOrEqual(18)

      expect(await overflowsSideways(page)).toBe(false)
      expect(pageErrors).toEqual([])
    }
    finally {
      await context.close()
    }
  })

  it('an admin signs up and invites a coach, who joins from the e-mail and sees only coach screens', async () => {
    const organisation = `Harbour Works ${viewport.width}x${viewport.height}`
    const adminEmail = uniqueEmail('browser-admin')
    const coachEmail = uniqueEmail('browser-coach')
    const coachName = `Cora Coach ${viewport.width}`

    // The admin's tablet.
    const admin = await openContext(browser, server.url, viewport)
    try {
      const page = admin.page
      await visit(page, '/sign-up')
      await expectTabletFriendly(page)
      await page.getByLabel('Organisation').fill(organisation)
      await page.getByLabel('Your name').fill('Ada Admin')
      await page.getByLabel('E-mail address').fill(adminEmail)
      await page.getByLabel('Password').fill(PASSWORD)
      await page.getByRole('button', { name: 'Create organisation' }).click()

      await waitForPath(page, '/settings/members')
      await expect.poll(() => page.getByRole('heading', { level: 1, name: 'Members' }).isVisible()).toBe(true)
      const nav = page.getByRole('navigation', { name: 'Main' })
      expect(await nav.getByRole('link', { name: 'Members' }).count()).toBe(1)
      expect(await nav.getByRole('link', { name: 'Settings' }).count()).toBe(1)
      expect(await page.getByRole('banner').innerText()).toContain(`Admin · ${organisation}`)

      const inviteForm = page.getByRole('form', { name: 'Invite someone' })
      await inviteForm.getByLabel('E-mail address').fill(coachEmail)
      await inviteForm.getByLabel('Role', { exact: true }).selectOption({ label: 'Coach' })
      await inviteForm.getByRole('button', { name: 'Send invitation' }).click()
      await expect.poll(() => inviteForm.getByRole('status').innerText()).toBe(`Done: Invitation sent to ${coachEmail}.`)
      const waiting = page.getByRole('region', { name: 'Waiting to be accepted' })
      await expect.poll(() => waiting.getByRole('listitem').filter({ hasText: coachEmail }).innerText()).toContain('as coach')
      await expectTabletFriendly(page)

      const mail = await server.waitForMail(m => m.to.includes(coachEmail))
      expect(mail.subject).toBe(`Join ${organisation} on Fourfold`)
      const link = mail.links.find(l => new URL(l).pathname === '/accept-invite')
      expect(link, `an accept link in ${JSON.stringify(mail.links)}`).toBeTruthy()

      // The coach's own tablet: no cookies from the admin.
      const coach = await openContext(browser, server.url, viewport)
      try {
        const cp = coach.page
        await visit(cp, link!)
        await expect.poll(() => cp.getByRole('heading', { level: 1, name: 'Accept your invitation' }).isVisible()).toBe(true)
        await expectTabletFriendly(cp)
        await cp.getByLabel('Your name').fill(coachName)
        await cp.getByLabel('Password').fill(PASSWORD)
        await cp.getByRole('button', { name: 'Join' }).click()
        await waitForPath(cp, '/')
        await expect.poll(() => cp.getByRole('heading', { level: 1 }).innerText()).toMatch(new RegExp(`^Good (morning|afternoon|evening), ${coachName}$`))
        expect(await cp.getByRole('banner').innerText()).toContain(`Coach · ${organisation}`)

        await cp.getByRole('button', { name: 'Sign out' }).click()
        await waitForPath(cp, '/sign-in')
        // Signed out for real: a private page sends us back to sign in.
        await visit(cp, '/account')
        expect(pathOf(cp)).toBe('/sign-in')
        expect((await cp.request.get('/api/me')).status()).toBe(401)

        await visit(cp, '/sign-in')
        await cp.getByLabel('E-mail address').fill(coachEmail)
        await cp.getByLabel('Password').fill(PASSWORD)
        await cp.getByRole('button', { name: 'Sign in' }).click()
        await waitForPath(cp, '/')
        await expect.poll(() => cp.getByRole('heading', { level: 1 }).innerText()).toContain(coachName)

        // What a coach sees: Today and Account, no admin screens or controls.
        const coachNav = cp.getByRole('navigation', { name: 'Main' })
        expect(await coachNav.getByRole('link', { name: 'Today' }).count()).toBe(1)
        expect(await coachNav.getByRole('link', { name: 'Account' }).count()).toBe(1)
        expect(await coachNav.getByRole('link', { name: 'Members' }).count()).toBe(0)
        expect(await coachNav.getByRole('link', { name: 'Settings' }).count()).toBe(0)
        expect(await cp.getByRole('link', { name: 'Invite people' }).count()).toBe(0)
        expect(await cp.getByRole('button', { name: 'Send invitation' }).count()).toBe(0)
        await expectTabletFriendly(cp)

        // Typing the address (server-rendered) and moving there inside the app (browser middleware).
        await visit(cp, '/settings/members')
        expect(pathOf(cp)).toBe('/')
        expect(await cp.getByRole('heading', { level: 1, name: 'Members' }).count()).toBe(0)
        expect(await cp.getByRole('form', { name: 'Invite someone' }).count()).toBe(0)
        await routerPush(cp, '/settings/members')
        await waitForPath(cp, '/')
        expect(await cp.getByRole('heading', { level: 1, name: 'Members' }).count()).toBe(0)
        await routerPush(cp, '/settings')
        await waitForPath(cp, '/')

        // The server refuses on its own, whatever the page shows.
        const viaContext = await cp.request.get('/api/members')
        expect(viaContext.status()).toBe(403)
        const viaPage = await cp.evaluate(async () => {
          const res = await fetch('/api/members')
          return { status: res.status, body: await res.json() as { message?: string } }
        })
        expect(viaPage.status).toBe(403)
        expect(viaPage.body.message).toContain('admin')
        const inviteAttempt = await cp.evaluate(async (email) => {
          const res = await fetch('/api/invites', { method: 'POST', headers: { 'content-type': 'application/json' }, body: JSON.stringify({ email, role: 'admin' }) })
          return res.status
        }, uniqueEmail('sneaky'))
        expect(inviteAttempt).toBe(403)
        expect(coach.pageErrors).toEqual([])
      }
      finally {
        await coach.context.close()
      }

      // Back on the admin's tablet: the coach is a member and the invitation is no longer waiting.
      const members = await page.request.get('/api/members')
      expect(members.status()).toBe(200)
      const list = await members.json() as Array<{ email: string, role: string, name: string }>
      expect(list.map(m => [m.email, m.role]).sort()).toEqual([[adminEmail, 'admin'], [coachEmail, 'coach']].sort())
      await page.reload()
      await waitForHydration(page)
      const row = page.locator(`tr[data-member="${coachEmail}"]`)
      await expect.poll(() => row.getByRole('cell').first().innerText()).toBe(coachName)
      expect(await row.getByLabel(`Role of ${coachName}`).inputValue()).toBe('coach')
      expect(await page.getByRole('region', { name: 'Waiting to be accepted' }).count()).toBe(0)
      await expectTabletFriendly(page)

      await page.getByRole('button', { name: 'Sign out' }).click()
      await waitForPath(page, '/sign-in')
      await visit(page, '/settings/members')
      expect(pathOf(page)).toBe('/sign-in')
      expect(admin.pageErrors).toEqual([])
    }
    finally {
      await admin.context.close()
    }
  })
})
