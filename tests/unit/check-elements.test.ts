// Which elements a spot check asks about: every safety key point with its reason, and a seeded
// sample of the rest, the same for the same check id on every side.
import { describe, expect, it } from 'vitest'
import { checkableElements, sampleSize, suggestCheckElements, toggleCheckElement } from '../../shared/utils/check-elements'
import { kp, single, step } from '../fixtures/breakdowns'

const content = single([
  step('Stop and lock out the slicer', [kp('safety', 'Own padlock on the isolator', 'Nobody can start it while your hands are inside'), kp('knack', 'Hang the key on your belt')]),
  step('Open the blade guard', [kp('knack', 'Lift both latches together', 'One latch alone jams the guard')]),
  step('Lift out the old blade set', [kp('safety', 'Cut-resistant gloves on', 'The blades are sharp even when blunt for bread')]),
  step('Fit the new blade set', [kp('quality', 'Seat both pins', 'Half-seated blades tear loaves')]),
  step('Close the guard and test', [kp('quality', 'Run one loaf first', 'A bad cut shows on the first loaf')]),
])

describe('checkable elements', () => {
  it('lists steps, key points and reasons (only where a reason is written) in reading order', () => {
    const all = checkableElements(content)
    const first = content.units[0]!.steps[0]!
    expect(all.slice(0, 4).map(e => [e.id, e.level, e.safety])).toEqual([
      [first.id, 'step', false],
      [first.keyPoints[0]!.id, 'keyPoint', true],
      [`${first.keyPoints[0]!.id}:reason`, 'reason', true],
      [first.keyPoints[1]!.id, 'keyPoint', false],
    ])
    // 5 steps, 6 key points, 5 reasons (one key point has none).
    expect(all).toHaveLength(16)
  })
})

describe('suggested elements', () => {
  const safety = checkableElements(content).filter(e => e.safety).map(e => e.id)

  it('always holds every safety key point and its reason', () => {
    for (const seed of ['a', 'b', 'c', '5f2b7d1e-0000-4000-8000-000000000001']) {
      const chosen = suggestCheckElements(content, seed)
      for (const id of safety) expect(chosen).toContain(id)
    }
  })

  it('adds a sample of the rest whose size follows sampleSize', () => {
    const rest = checkableElements(content).length - safety.length
    expect(rest).toBe(12)
    expect(sampleSize(rest)).toBe(3)
    expect(suggestCheckElements(content, 'seed')).toHaveLength(safety.length + 3)
    expect(sampleSize(40)).toBe(8)
    expect(sampleSize(2)).toBe(2)
    expect(sampleSize(0)).toBe(0)
  })

  it('is the same for the same seed, differs across seeds, and keeps reading order', () => {
    const order = checkableElements(content).map(e => e.id)
    expect(suggestCheckElements(content, 'check-1')).toEqual(suggestCheckElements(content, 'check-1'))
    const samples = new Set(Array.from({ length: 30 }, (_, i) => suggestCheckElements(content, `check-${i}`).join(',')))
    expect(samples.size).toBeGreaterThan(5)
    for (const seed of ['x', 'y', 'z']) {
      const chosen = suggestCheckElements(content, seed)
      expect([...chosen].sort((a, b) => order.indexOf(a) - order.indexOf(b))).toEqual(chosen)
    }
  })

  it('samples every non-safety element about equally often over many seeds', () => {
    const counts = new Map<string, number>()
    const runs = 6000
    for (let i = 0; i < runs; i++) for (const id of suggestCheckElements(content, `seed-${i}`)) counts.set(id, (counts.get(id) ?? 0) + 1)
    const rest = checkableElements(content).filter(e => !e.safety)
    // Each of the 12 is drawn with probability 3/12; 6000 runs → 1500 expected, a wide band of ±15 %.
    for (const e of rest) expect(Math.abs((counts.get(e.id) ?? 0) - 1500)).toBeLessThan(225)
  })

  it('lets the coach add and take away elements, keeping reading order', () => {
    const order = checkableElements(content).map(e => e.id)
    const start = suggestCheckElements(content, 's')
    const missing = order.find(id => !start.includes(id))!
    const added = toggleCheckElement(content, start, missing)
    expect(added).toContain(missing)
    expect([...added].sort((a, b) => order.indexOf(a) - order.indexOf(b))).toEqual(added)
    expect(toggleCheckElement(content, added, missing)).toEqual(start)
  })
})
