// The cross-site rule on its own (server/utils/request-origin.ts). Source: OWASP ASVS 5.0 §3.5
// "Browser Origin Separation" — a state-changing request is accepted only when the browser shows it
// came from the application's own origin (Origin, or Sec-Fetch-Site where Origin is missing).
// What browsers send: the Fetch standard (Origin on every non-GET/HEAD request; "null" for opaque
// origins) and W3C Fetch Metadata (Sec-Fetch-Site: same-origin, same-site, cross-site, none).
import { describe, expect, it } from 'vitest'
import { canonicalOrigin, foreignOriginProblem } from '../../server/utils/request-origin'

const APP = 'https://fourfold.example'
const own = [APP, 'http://10.0.0.5:3000']
const judge = (method: string, headers: { origin?: string, secFetchSite?: string } = {}) =>
  foreignOriginProblem({ method, ...headers, ownOrigins: own, appUrl: APP })

describe('the same-origin rule for changes', () => {
  it('lets reads through whatever their origin', () => {
    for (const method of ['GET', 'HEAD', 'OPTIONS', 'get']) {
      expect(judge(method, { origin: 'https://elsewhere.example', secFetchSite: 'cross-site' })).toBeNull()
    }
  })

  it('accepts a change from the app\'s own address or from the address the request was sent to', () => {
    expect(judge('POST', { origin: APP })).toBeNull()
    expect(judge('PATCH', { origin: 'http://10.0.0.5:3000' })).toBeNull()
    // The same origin written differently: host case and the default port do not make it foreign.
    expect(judge('DELETE', { origin: 'https://FOURFOLD.example:443' })).toBeNull()
  })

  it('refuses a change from another origin, naming it and saying where to go instead', () => {
    for (const method of ['POST', 'PUT', 'PATCH', 'DELETE', 'PROPPATCH']) {
      const message = judge(method, { origin: 'https://elsewhere.example' })
      expect(message).toContain('https://elsewhere.example')
      expect(message).toContain(`Open Fourfold itself at ${APP}`)
    }
  })

  it('refuses what only looks like the app: another scheme, port or a longer host', () => {
    for (const origin of ['http://fourfold.example', 'https://fourfold.example:8443', 'https://fourfold.example.elsewhere.example', 'https://sub.fourfold.example']) {
      expect(judge('POST', { origin }), origin).not.toBeNull()
    }
  })

  it('refuses the opaque origin "null" and an Origin that is not an address', () => {
    expect(judge('POST', { origin: 'null' })).toContain('a page with no address of its own')
    expect(judge('POST', { origin: 'fourfold.example' })).not.toBeNull()
    expect(judge('POST', { origin: 'file:///tmp/page.html' })).not.toBeNull()
  })

  it('without Origin, trusts Sec-Fetch-Site: another site (or a sibling host) is refused', () => {
    expect(judge('POST', { secFetchSite: 'cross-site' })).toContain('your browser says')
    expect(judge('POST', { secFetchSite: 'same-site' })).not.toBeNull()
    expect(judge('POST', { secFetchSite: 'same-origin' })).toBeNull()
    expect(judge('POST', { secFetchSite: 'none' })).toBeNull()
  })

  it('lets a change with neither header through: not a browser, so no browser credentials to abuse', () => {
    expect(judge('POST')).toBeNull()
  })

  it('Origin decides over Sec-Fetch-Site when both are sent', () => {
    expect(judge('POST', { origin: APP, secFetchSite: 'cross-site' })).toBeNull()
    expect(judge('POST', { origin: 'https://elsewhere.example', secFetchSite: 'same-origin' })).not.toBeNull()
  })

  it('writes origins in one canonical form', () => {
    expect(canonicalOrigin('HTTPS://Fourfold.Example:443/path?q')).toBe('https://fourfold.example')
    expect(canonicalOrigin('http://127.0.0.1:3000')).toBe('http://127.0.0.1:3000')
    expect(canonicalOrigin('null')).toBeNull()
    expect(canonicalOrigin('ftp://fourfold.example')).toBeNull()
  })
})
