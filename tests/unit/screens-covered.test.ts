// Every page under app/pages/ is in the screen list that tests/browser/walk.test.ts walks (with an
// axe-core check, screenshots at both tablet shapes, no console error and no failed request), with
// the roles its own definePageMeta names. A new page therefore fails here until the walk knows it.
import { readdirSync, readFileSync } from 'node:fs'
import { join, relative } from 'node:path'
import { describe, expect, it } from 'vitest'
import { SCREENS } from '../support/screens'
import { ROLES } from '../../shared/types/roles'

const PAGES = join(process.cwd(), 'app/pages')
// The signed-out pages, as app/middleware/auth.global.ts lets them through.
const MIDDLEWARE = readFileSync(join(process.cwd(), 'app/middleware/auth.global.ts'), 'utf8')
const PUBLIC = new Set([...MIDDLEWARE.match(/PUBLIC_PAGES = new Set\(\[([^\]]*)\]/)![1]!.matchAll(/'([^']+)'/g)].map(m => m[1]!))

function pageFiles(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap(entry => entry.isDirectory() ? pageFiles(join(dir, entry.name)) : entry.name.endsWith('.vue') ? [join(dir, entry.name)] : [])
}

/** The route Nuxt makes of a page file: index dropped, [param] as :param; definePageMeta's path wins. */
function routeOf(file: string, source: string): string {
  const own = source.match(/definePageMeta\(\{[^}]*\bpath:\s*'([^']+)'/)
  if (own) return own[1]!
  const parts = relative(PAGES, file).replace(/\.vue$/, '').split('/').filter(p => p !== 'index').map(p => p.replace(/^\[(\w+)\]$/, ':$1'))
  return `/${parts.join('/')}`
}

/** The roles a page names in definePageMeta({ roles }), or every role when it names none. */
function rolesOf(source: string): string[] {
  const named = source.match(/definePageMeta\(\{[^}]*\broles:\s*\[([^\]]*)\]/)
  return named ? [...named[1]!.matchAll(/'(\w+)'/g)].map(m => m[1]!).sort() : [...ROLES].sort()
}

const pages = pageFiles(PAGES).map((file) => {
  const source = readFileSync(file, 'utf8')
  const route = routeOf(file, source)
  return { file: relative(PAGES, file), route, visitors: PUBLIC.has(route) ? ['signed-out'] : rolesOf(source) }
})

describe('every page has a walk entry with an axe check', () => {
  it('finds the pages and reads the route rules it relies on', () => {
    expect(pages.length).toBeGreaterThan(20)
    expect(PUBLIC.has('/sign-in')).toBe(true)
    expect(pages.find(p => p.file === 'lessons/observe/[id].vue')?.route).toBe('/lessons/:id/observe')
    expect(pages.find(p => p.file === 'jobs/[id]/index.vue')?.route).toBe('/jobs/:id')
  })

  it.each(pages)('$file ($route) is walked by the roles that may open it', (page) => {
    const screen = SCREENS.find(s => s.file === page.file)
    expect(screen, `${page.file} has no entry in tests/support/screens.ts, so no walk and no axe check`).toBeDefined()
    expect(screen!.route).toBe(page.route)
    expect([...screen!.visitors].sort()).toEqual(page.visitors)
  })

  it('lists no screen whose page is gone', () => {
    const files = new Set(pages.map(p => p.file))
    expect(SCREENS.map(s => s.file).filter(f => !files.has(f))).toEqual([])
    expect(new Set(SCREENS.map(s => s.file)).size).toBe(SCREENS.length)
  })
})
