import { describe, expect, it } from 'vitest'
import { breakdownGuidance, wordCount } from '../../shared/utils/breakdown-guidance'
import { id, kp, single, step } from '../fixtures/breakdowns'

const rules = (g: ReturnType<typeof breakdownGuidance>) => g.map(x => x.rule)
const noHazards = { hazards: [] }
const withHazard = { hazards: [{ category: 'sharp-edges' }] }

describe('breakdown guidance', () => {
  // Job Instruction pocket card, War Manpower Commission, 1944: "a safety factor is always a key point".
  it('warns when a job with hazards has no safety key point, citing the 1944 card', () => {
    const content = single([step('Lift blade guard', [kp('quality', 'Both latches open', 'Guard binds')])])
    const g = breakdownGuidance(withHazard, content)
    expect(rules(g)).toEqual(['safety-key-point'])
    expect(g[0]!.message).toContain('A safety factor is always a key point')
    expect(g[0]!.source).toMatch(/War Manpower Commission, 1944/)
    const safe = single([step('Lift blade guard', [kp('safety', 'Blade stopped and locked out', 'Blade cuts')])])
    expect(breakdownGuidance(withHazard, safe)).toEqual([])
    expect(breakdownGuidance(noHazards, content)).toEqual([])
  })

  it('warns about a key point without a reason, naming where it is', () => {
    const s = step('Seat new blade', [kp('knack', 'Rock it onto the pins')])
    const g = breakdownGuidance(noHazards, single([s]))
    expect(g).toHaveLength(1)
    expect(g[0]).toMatchObject({ rule: 'key-point-reason', target: { stepId: s.id, keyPointId: s.keyPoints[0]!.id } })
    expect(g[0]!.message).toBe('Key point 1 of step 1 has no reason. Say why it matters.')
    expect(g[0]!.source).toMatch(/common practice, no source/)
  })

  // A step is usually an action and its object (common practice, no source): about six words.
  it('warns when an important step runs past six words', () => {
    expect(rules(breakdownGuidance(noHazards, single([step('Remove the worn blade set')])))).toEqual([])
    expect(rules(breakdownGuidance(noHazards, single([step('Slide the blade set out carefully from the left')])))).toEqual(['long-step'])
    expect(wordCount('  two   words ')).toBe(2)
  })

  it('suggests splitting a step with more than five key points', () => {
    const five = Array.from({ length: 5 }, (_, i) => kp('quality', `Point ${i}`, 'Because'))
    expect(breakdownGuidance(noHazards, single([step('Thread film', five)]))).toEqual([])
    const six = [...five, kp('quality', 'Point 6', 'Because')]
    expect(rules(breakdownGuidance(noHazards, single([step('Thread film', six)])))).toEqual(['many-key-points'])
  })

  // Job Instruction manual, War Manpower Commission, 1944: long jobs are split into instruction units.
  it('suggests units after about ten steps, and smaller units when a unit is long', () => {
    const ten = Array.from({ length: 10 }, (_, i) => step(`Step ${i}`))
    expect(breakdownGuidance(noHazards, single(ten))).toEqual([])
    const eleven = single([...ten, step('One more')])
    const g = breakdownGuidance(noHazards, eleven)
    expect(rules(g)).toEqual(['many-steps'])
    expect(g[0]!.message).toMatch(/splitting the job into units/)
    const units = { units: [{ id: id(), title: 'Prepare', steps: [step('a')] }, { id: id(), title: 'Fit', steps: Array.from({ length: 11 }, (_, i) => step(`s${i}`)) }] }
    expect(breakdownGuidance(noHazards, units)[0]!.message).toMatch(/Unit 2 has 11 important steps/)
  })

  it('never returns an error level: every rule is a warning', () => {
    const g = breakdownGuidance(withHazard, single([step('A step that is far too long to be a step', [kp('knack', 'x')])]))
    expect(new Set(rules(g))).toEqual(new Set(['safety-key-point', 'long-step', 'key-point-reason']))
  })
})
