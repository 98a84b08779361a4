// The parts of the security headers decided at run time; nuxt-security sets the rest
// (server/utils/security-headers.ts).
//
// HSTS and `upgrade-insecure-requests` only for an install people reach over https, judged by
// NUXT_APP_URL (the address in every mail link, so the one people use). Behind a TLS-terminating
// proxy the request itself arrives over plain http, so the request's scheme cannot decide; and on a
// plain-http install (the demo, a LAN) upgrading requests would send the browser to a port that
// does not answer. Browsers ignore HSTS received over http (RFC 6797 §8.1).
import type { H3Event } from 'h3'
import type { NuxtSecurityRouteRules } from 'nuxt-security'

type Csp = Record<string, string[] | string | boolean>

function appUrlIsHttps(): boolean {
  try {
    return new URL(useRuntimeConfig().appUrl).protocol === 'https:'
  }
  catch {
    console.error('[fourfold] NUXT_APP_URL is not an address; HSTS is not sent.')
    return false
  }
}

/** The page policy nuxt-security resolved for this response, if any. */
function pagePolicy(event: H3Event): Csp | undefined {
  const headers = event.context.security?.rules?.headers
  const csp = headers ? headers.contentSecurityPolicy : undefined
  return csp && typeof csp === 'object' ? csp as Csp : undefined
}

export default defineNitroPlugin((nitroApp) => {
  if (import.meta.prerender) return
  const https = appUrlIsHttps()
  if (https) {
    nitroApp.hooks.hook('nuxt-security:routeRules', (rules: Record<string, NuxtSecurityRouteRules>) => {
      const csp = rules['/**']?.headers && rules['/**'].headers.contentSecurityPolicy
      if (csp && typeof csp === 'object') csp['upgrade-insecure-requests'] = true
    })
  }
  nitroApp.hooks.hook('request', (event) => {
    // Every response of an https install: pages, API answers and static files alike.
    if (https) setResponseHeader(event, 'Strict-Transport-Security', STRICT_TRANSPORT_SECURITY)
    // An API answer opened in a tab loads nothing and cannot be framed. Not on static files: the
    // service worker's own policy comes from /sw.js's headers. A route may set its own (uploads).
    if (event.path.startsWith('/api/')) setResponseHeader(event, 'Content-Security-Policy', API_CONTENT_SECURITY_POLICY)
  })
  // nuxt-security fills the nonce in when a page's HTML is rendered; a redirect answered by route
  // middleware skips that step and would carry the literal 'nonce-{{nonce}}'.
  nitroApp.hooks.hook('render:response', (_response, { event }) => {
    const csp = pagePolicy(event)
    const nonce = event.context.security?.nonce
    if (!csp) return
    for (const [directive, value] of Object.entries(csp)) {
      if (!Array.isArray(value)) continue
      csp[directive] = value.map(source => source === '\'nonce-{{nonce}}\'' ? (nonce ? `'nonce-${nonce}'` : '') : source).filter(Boolean)
    }
  })
})
