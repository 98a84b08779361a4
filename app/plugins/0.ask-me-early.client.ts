// On a page rendered in the browser, asks who is signed in (GET /api/me) at once, beside
// nuxt-auth-utils' session request, and starts loading the page's scripts: see utils/early-me.ts.
// Before the module's plugins ('pre'), and without the member store (Pinia is not installed yet).
import { askMeEarly } from '~/utils/early-me'

export default defineNuxtPlugin({
  name: 'fourfold:ask-me-early',
  enforce: 'pre',
  setup(nuxtApp) {
    // A server-rendered page brings who is signed in within its payload.
    if (nuxtApp.payload.serverRendered) return
    askMeEarly(() => $fetch('/api/me'))
    void preloadRouteComponents(window.location.pathname)
  },
})
