// Cross-site request forgery: a change (POST, PUT, PATCH, DELETE, any method but GET, HEAD and
// OPTIONS) is accepted only from Fourfold's own pages (OWASP ASVS 5.0 §3.5, "Browser Origin
// Separation"). Browsers send Origin on every such request, so a foreign or "null" Origin is
// refused; without Origin, Sec-Fetch-Site decides ("cross-site" and "same-site" — a sibling host is
// another origin too — are refused). A request with neither header is not a browser's (tablet
// sync clients, curl, scripts) and carries no ambient browser credentials to abuse, so it passes.
// Pure, so the rule is tested on its own (tests/unit/request-origin.test.ts).

export const SAFE_METHODS = new Set(['GET', 'HEAD', 'OPTIONS'])

export interface RequestOriginFacts {
  method: string
  /** The Origin header as sent, if any. */
  origin?: string
  /** The Sec-Fetch-Site header as sent, if any. */
  secFetchSite?: string
  /** Fourfold's own origins: NUXT_APP_URL's and the one the request was addressed to. */
  ownOrigins: readonly string[]
  /** Where to send people who hit the refusal. */
  appUrl: string
}

/** An origin in its canonical form (lower-case host, default port dropped), or null if it is not one. */
export function canonicalOrigin(value: string): string | null {
  try {
    const url = new URL(value)
    if (url.protocol !== 'http:' && url.protocol !== 'https:') return null
    return url.origin
  }
  catch {
    return null
  }
}

/** Why the request is refused as coming from another site, or null when it may go on. */
export function foreignOriginProblem(facts: RequestOriginFacts): string | null {
  if (SAFE_METHODS.has(facts.method.toUpperCase())) return null
  const own = new Set(facts.ownOrigins.map(canonicalOrigin).filter((o): o is string => o !== null))
  const fix = `Open Fourfold itself at ${facts.appUrl} and try again from there.`
  if (facts.origin !== undefined) {
    const origin = canonicalOrigin(facts.origin.trim())
    if (origin && own.has(origin)) return null
    const from = origin ?? 'a page with no address of its own'
    return `Fourfold refused this change because it was sent from another site (${from}). ${fix}`
  }
  const site = facts.secFetchSite?.trim().toLowerCase()
  if (site === 'cross-site' || site === 'same-site') {
    return `Fourfold refused this change because your browser says it was sent from another site. ${fix}`
  }
  return null
}
