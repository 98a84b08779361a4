// A refresher lesson after a new breakdown version presents and tries out only what changed
// (DESIGN.md §8, "Retraining"). The tablet and the server both narrow the pinned content with
// focusContent, so a refresher is scored over the same elements on both sides. Which elements
// changed is refresher-changes.ts's business: this file stays free of the diff code, because the
// lesson runner loads it and the runner's scripts are budgeted.
import type { BreakdownContent } from '../schemas/breakdown'

/**
 * The content a lesson works on: everything when `focus` is null; otherwise the steps named in
 * `focus` (with all their key points) and the steps holding a key point named in `focus` (with
 * just those key points). Units left empty are dropped.
 */
export function focusContent(content: BreakdownContent, focus: readonly string[] | null | undefined): BreakdownContent {
  if (!focus) return content
  const wanted = new Set(focus)
  const units = content.units
    .map(unit => ({
      ...unit,
      steps: unit.steps
        .filter(step => wanted.has(step.id) || step.keyPoints.some(k => wanted.has(k.id)))
        .map(step => (wanted.has(step.id) ? step : { ...step, keyPoints: step.keyPoints.filter(k => wanted.has(k.id)) })),
    }))
    .filter(unit => unit.steps.length > 0)
  return { ...content, units }
}
