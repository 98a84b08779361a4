// axe-core (the npm package, injected into the page) with the WCAG 2.2 AA rule set, as the
// browser tests run it.
import type { Page } from 'playwright-core'
import { addToolScript } from './browser'

export interface AxeViolation { id: string, impact: string, help: string, nodes: string[] }

/** The page's WCAG 2.0–2.2 A and AA violations, each with up to five of its elements. */
export async function axeViolations(page: Page): Promise<AxeViolation[]> {
  // Colours are judged once every transition has finished, not halfway through one.
  await page.evaluate(() => Promise.all(document.getAnimations().map(a => a.finished.catch(() => undefined))))
  // Over the DevTools protocol (addToolScript): the app's Content-Security-Policy refuses inline scripts.
  if (!(await page.evaluate(() => 'axe' in window))) await addToolScript(page, 'node_modules/axe-core/axe.min.js')
  return page.evaluate(async () => {
    const axe = (window as unknown as { axe: { run: (ctx: Document, o: object) => Promise<{ violations: Array<{ id: string, impact: string, help: string, nodes: Array<{ target: string[] }> }> }> } }).axe
    const result = await axe.run(document, { runOnly: { type: 'tag', values: ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa', 'wcag22aa'] } })
    return result.violations.map(v => ({ id: v.id, impact: v.impact, help: v.help, nodes: v.nodes.slice(0, 5).map(n => n.target.join(' ')) }))
  })
}
