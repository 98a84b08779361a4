// The web security headers in one place: nuxt-security's options (nuxt.config.ts `security`) and the
// HSTS value and the API policy that server/plugins/security-headers.ts adds when the app is reached over https.
// Fourfold ships its scripts, styles, fonts and icons, so the policy names no origin but its own.
import type { ModuleOptions } from 'nuxt-security'

/**
 * Only the app's own origin. Inline scripts (Nuxt's config script, the payload) and inline styles
 * (the server-rendered component styles) carry a nonce made per response by nuxt-security; never
 * 'unsafe-inline' for scripts. Style attributes stay allowed (`style-src-attr`): an attribute cannot
 * run script, and Vue renders `:style` bindings as attributes. blob: and data: images are the
 * photos kept on the tablet (object URLs of IndexedDB blobs) and the drawn signature (a PNG data URL).
 * `upgrade-insecure-requests` is switched on at run time only when NUXT_APP_URL is https
 * (server/plugins/security-headers.ts): on a plain-http install it would send the browser to https.
 */
export const CONTENT_SECURITY_POLICY = {
  'default-src': ['\'self\''],
  'base-uri': ['\'none\''],
  'connect-src': ['\'self\''],
  'font-src': ['\'self\''],
  'form-action': ['\'self\''],
  'frame-ancestors': ['\'none\''],
  'frame-src': ['\'none\''],
  'img-src': ['\'self\'', 'blob:', 'data:'],
  'manifest-src': ['\'self\''],
  'media-src': ['\'self\''],
  'object-src': ['\'none\''],
  'script-src': ['\'self\'', '\'nonce-{{nonce}}\''],
  'script-src-attr': ['\'none\''],
  'style-src': ['\'self\'', '\'nonce-{{nonce}}\''],
  'style-src-attr': ['\'unsafe-inline\''],
  'worker-src': ['\'self\''],
  'upgrade-insecure-requests': false,
}

/** API answers: JSON or a file, never a page, so nothing may load and nothing may frame them. */
export const API_CONTENT_SECURITY_POLICY = 'default-src \'none\'; frame-ancestors \'none\''

/**
 * One year, subdomains included (OWASP ASVS 5.0 V3.4.1 asks for at least a year, from memory).
 * Sent only when NUXT_APP_URL is https; browsers ignore it over http anyway (RFC 6797 §8.1).
 */
export const STRICT_TRANSPORT_SECURITY = 'max-age=31536000; includeSubDomains'

/**
 * nuxt-security with the headers on and its request filters off: request size (server/middleware/
 * body-limit.ts does it), rate limiting (sign-in throttling is in the database and works across
 * instances; a per-process limit would refuse 50 tablets syncing), the XSS filter (it rejects honest
 * text such as "< 5 kg"; zod validates and Vue escapes), CORS (no other origin may call the API) and
 * its token CSRF (the Origin check in server/middleware/0.same-origin.ts). Console calls stay in the
 * client build, so a browser test can still see an error.
 */
export const SECURITY_MODULE_OPTIONS: Partial<ModuleOptions> = {
  nonce: true,
  sri: true,
  removeLoggers: false,
  rateLimiter: false,
  requestSizeLimiter: false,
  xssValidator: false,
  corsHandler: false,
  allowedMethodsRestricter: false,
  csrf: false,
  hidePoweredBy: true,
  headers: {
    contentSecurityPolicy: CONTENT_SECURITY_POLICY,
    crossOriginOpenerPolicy: 'same-origin',
    crossOriginResourcePolicy: 'same-origin',
    referrerPolicy: 'no-referrer',
    // The HSTS plugin decides at run time; the module's own header would be fixed at build time.
    strictTransportSecurity: false,
    xContentTypeOptions: 'nosniff',
    xFrameOptions: 'DENY',
  },
}
