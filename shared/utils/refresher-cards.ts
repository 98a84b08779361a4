// A refresher's cards keep the breakdown's own numbers: the focused content has fewer steps, but
// the learner knows the job (and the change list speaks) as "step 3", not "step 2 of the refresher".
import type { BreakdownContent } from '../schemas/breakdown'
import type { PassCard } from './lesson-flow'

/** The cards (made from focused content) numbered as in the whole version: step n of all, key point m of its step. */
export function withBreakdownNumbers(cards: readonly PassCard[], whole: BreakdownContent): PassCard[] {
  const steps = whole.units.flatMap(u => u.steps)
  const stepNumber = new Map(steps.map((s, i) => [s.id, i + 1]))
  const keyPointNumber = new Map(steps.flatMap(s => s.keyPoints.map((k, i) => [k.id, i + 1] as const)))
  return cards.map(card => ({
    ...card,
    stepNumber: stepNumber.get(card.step.id) ?? card.stepNumber,
    stepCount: steps.length,
    keyPointNumber: card.keyPoint ? keyPointNumber.get(card.keyPoint.id) ?? card.keyPointNumber : null,
  }))
}
