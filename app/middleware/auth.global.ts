// Signed-out visitors reach only the public pages; a page may also name the roles it is for
// (definePageMeta({ roles: ['admin'] })). The server enforces the same rules on its own.
// Offline, the tablet's remembered sign-in opens the screens that work offline (Today, lessons);
// the others say they need a connection. Whenever the server answers, its answer decides.
import type { Role } from '#shared/types/roles'
import { APP_SHELL_PATH } from '~/utils/app-shell'
import { worksOffline } from '~/utils/offline'

const PUBLIC_PAGES = new Set(['/sign-in', '/sign-up', '/forgot-password', '/reset-password', '/accept-invite', '/dev/mail'])

export default defineNuxtRouteMiddleware(async (to) => {
  // A request for /api/ reaches the pages only when no API route answers its method and path: answer
  // with a JSON 404 that names them, never the sign-in redirect (tablets and outside tools read /api/
  // as JSON). It is sent the way navigateTo sends a redirect from here (the render's own response).
  if (import.meta.server && to.path.startsWith('/api/')) {
    const ssrContext = useNuxtApp().ssrContext
    if (ssrContext) {
      const message = `No API route answers ${useRequestEvent()?.method ?? 'GET'} ${to.path}.`
      ssrContext['~renderResponse'] = { statusCode: 404, statusMessage: 'Not Found', headers: { 'content-type': 'application/json; charset=utf-8', 'cache-control': 'no-store' }, body: JSON.stringify({ statusCode: 404, statusMessage: 'Not Found', message, data: { message } }) }
    }
    return abortNavigation()
  }
  // The shell is only the frame the offline screens open in, not a screen of its own.
  if (to.path === APP_SHELL_PATH) return navigateTo('/', { replace: true })
  if (PUBLIC_PAGES.has(to.path)) return
  const signIn = () => navigateTo({ path: '/sign-in', query: to.fullPath !== '/' ? { next: to.fullPath } : {} })
  const { loggedIn } = useUserSession()
  const member = useMemberStore()
  // In the browser, when who is signed in must be asked first (moving on after signing out), the
  // page's own scripts load meanwhile rather than after the answer. On a fresh load of a
  // browser-rendered page plugins/0.ask-me-early.client.ts has started them already.
  if (import.meta.client && !member.me) void preloadRouteComponents(to)
  if (!loggedIn.value) {
    // On the server the session is the answer. In the browser a missing session may only mean
    // the session call failed for want of a connection: ask again, and fall back to the tablet.
    if (import.meta.server) return signIn()
    if (!member.me || !member.fromDevice) await member.refresh()
    if (!member.me) return signIn()
  }
  else if (!member.me) {
    await member.refresh()
    if (!member.me) return navigateTo('/sign-in')
  }
  const offline = import.meta.client && (member.fromDevice || !navigator.onLine)
  if (offline && !worksOffline(to.path)) return navigateTo({ path: '/needs-connection', query: { next: to.fullPath } })
  const roles = to.meta.roles as Role[] | undefined
  if (roles && !roles.includes(member.me.role)) return navigateTo('/')
})
