// Guidance while writing a breakdown: warnings that never block, each naming where its rule comes from.
import type { BreakdownContent } from '../schemas/breakdown'

export type GuidanceRule = 'safety-key-point' | 'key-point-reason' | 'long-step' | 'many-key-points' | 'many-steps'

export interface Guidance {
  rule: GuidanceRule
  message: string
  source: string
  target: { unitId?: string, stepId?: string, keyPointId?: string }
}

export const GUIDANCE_SOURCES: Record<GuidanceRule, string> = {
  'safety-key-point': 'Job Instruction pocket card, War Manpower Commission, 1944: "a safety factor is always a key point"',
  'key-point-reason': 'Job breakdown sheet: every key point carries its reason (common practice, no source)',
  'long-step': 'An important step is usually an action and its object, a few words (common practice, no source)',
  'many-key-points': 'More than five key points is more than a learner holds for one step (common practice, no source)',
  'many-steps': 'Job Instruction manual, War Manpower Commission, 1944: long jobs are taught in instruction units',
}

/** About six words; a step is an action and its object. */
export const LONG_STEP_WORDS = 6
export const MANY_KEY_POINTS = 5
export const MANY_STEPS = 10

export function wordCount(text: string): number {
  return text.trim().split(/\s+/).filter(Boolean).length
}

export function breakdownGuidance(job: { hazards: ReadonlyArray<{ category: string }> }, content: BreakdownContent): Guidance[] {
  const out: Guidance[] = []
  const add = (rule: GuidanceRule, message: string, target: Guidance['target'] = {}) => out.push({ rule, message, source: GUIDANCE_SOURCES[rule], target })
  const allKeyPoints = content.units.flatMap(u => u.steps.flatMap(s => s.keyPoints))
  const hasUnits = content.units.length > 1

  if (job.hazards.length > 0 && !allKeyPoints.some(k => k.kind === 'safety')) {
    add('safety-key-point', 'This job has hazards but no safety key point. A safety factor is always a key point.')
  }

  content.units.forEach((unit, u) => {
    const where = (s: number) => (hasUnits ? `Step ${s + 1} of unit ${u + 1}` : `Step ${s + 1}`)
    if (unit.steps.length > MANY_STEPS) {
      add('many-steps', hasUnits
        ? `Unit ${u + 1} has ${unit.steps.length} important steps. Consider splitting it into smaller units.`
        : `This breakdown has ${unit.steps.length} important steps. Consider splitting the job into units and teaching one at a time.`, { unitId: unit.id })
    }
    unit.steps.forEach((step, s) => {
      const words = wordCount(step.text)
      if (words > LONG_STEP_WORDS) {
        add('long-step', `${where(s)} is ${words} words long. Say the action and its object; move detail into key points.`, { unitId: unit.id, stepId: step.id })
      }
      if (step.keyPoints.length > MANY_KEY_POINTS) {
        add('many-key-points', `${where(s)} has ${step.keyPoints.length} key points. Consider splitting it into two steps.`, { unitId: unit.id, stepId: step.id })
      }
      step.keyPoints.forEach((kp, k) => {
        if (kp.text && !kp.reason) {
          add('key-point-reason', `Key point ${k + 1} of ${where(s).toLowerCase()} has no reason. Say why it matters.`, { unitId: unit.id, stepId: step.id, keyPointId: kp.id })
        }
      })
    })
  })
  return out
}
