// On a page rendered in the browser, asks who is signed in (GET /api/me) at once, beside
// nuxt-auth-utils' session request, and starts loading the page's scripts: see utils/early-me.ts.
// Before the module's plugins ('pre'), and without the member store (Pinia is not installed yet).
import { askMeEarly, takeEarlyMe } from '~/utils/early-me'

export default defineNuxtPlugin({
  name: 'fourfold:ask-me-early',
  enforce: 'pre',
  setup(nuxtApp) {
    // A server-rendered page brings who is signed in within its payload.
    if (nuxtApp.payload.serverRendered) return
    askMeEarly(() => $fetch('/api/me'))
    void preloadRouteComponents(window.location.pathname)
    // The first page's middleware has taken it by now. An answer still untaken (a page that never
    // asked) would be stale by the next refresh, such as the one after signing in: drop it.
    nuxtApp.hooks.hookOnce('app:mounted', () => {
      void takeEarlyMe()
    })
  },
})
