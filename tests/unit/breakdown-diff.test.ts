import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { diffBreakdowns, summariseDiff } from '../../shared/utils/breakdown-diff'
import type { BreakdownContent } from '../../shared/schemas/breakdown'
import { id, kp, single, step } from '../fixtures/breakdowns'

const clone = <T>(v: T): T => structuredClone(v)
const byStatus = (entries: ReturnType<typeof diffBreakdowns>) => entries.map(e => `${e.status}${e.changes.length ? `:${e.changes.join('+')}` : ''}:${e.after?.text ?? e.before?.text}`)

describe('version diff', () => {
  const v1 = single([
    step('Stop slicer', [kp('safety', 'Lock out the isolator', 'Blades coast for a minute')]),
    step('Open blade guard'),
    step('Remove blade set', [kp('safety', 'Cut-resistant gloves', 'Blades are sharp')]),
    step('Fit new set'),
  ])

  it('finds nothing when nothing changed', () => {
    const entries = diffBreakdowns(v1, clone(v1))
    expect(entries.every(e => e.status === 'same')).toBe(true)
    expect(entries).toHaveLength(7)
  })

  it('reports added, removed, reworded and moved, in the newer order with removals at their old place', () => {
    const v2 = clone(v1)
    const steps = v2.units[0]!.steps
    steps[1]!.text = 'Swing blade guard open' // reworded
    const [removed] = steps.splice(3, 1) // "Fit new set" removed
    steps.splice(0, 0, steps.splice(2, 1)[0]!) // "Remove blade set" moved to the top (order only)
    steps.push(step('Run test slice')) // added
    expect(removed!.text).toBe('Fit new set')
    const entries = diffBreakdowns(v1, v2)
    expect(byStatus(entries)).toEqual([
      'same:',
      'changed:moved:Remove blade set',
      'same:Cut-resistant gloves',
      'same:Stop slicer',
      'same:Lock out the isolator',
      'changed:reworded:Swing blade guard open',
      'removed:Fit new set',
      'added:Run test slice',
    ])
    expect(summariseDiff(entries)).toEqual({ added: 1, removed: 1, reworded: 1, moved: 1, otherChanges: 0 })
  })

  it('sees a key point that changed kind or reason, and a moved key point between steps', () => {
    const v2 = clone(v1)
    const [first, , third] = v2.units[0]!.steps
    first!.keyPoints[0]!.reason = 'Blades coast for up to two minutes'
    third!.keyPoints[0]!.kind = 'quality'
    v2.units[0]!.steps[1]!.keyPoints.push(first!.keyPoints.shift()!)
    const entries = diffBreakdowns(v1, v2)
    const lockout = entries.find(e => e.after?.text === 'Lock out the isolator')!
    expect(lockout.changes).toEqual(['moved', 'reason'])
    expect(lockout.before!.position).toBe('Step 1, key point 1')
    expect(lockout.after!.position).toBe('Step 2, key point 1')
    expect(entries.find(e => e.after?.text === 'Cut-resistant gloves')!.changes).toEqual(['kind'])
  })

  it('follows steps across units', () => {
    const a = step('Grease nipple A')
    const b = step('Grease nipple B')
    const c = step('Wipe excess')
    const older: BreakdownContent = { units: [{ id: id(), title: 'Prepare', steps: [a, b] }, { id: id(), title: 'Finish', steps: [c] }] }
    const newer = clone(older)
    newer.units[1]!.steps.unshift(newer.units[0]!.steps.pop()!)
    newer.units[1]!.title = 'Finish up'
    const entries = diffBreakdowns(older, newer)
    expect(byStatus(entries)).toEqual(['same:Prepare', 'same:Grease nipple A', 'changed:reworded:Finish up', 'changed:moved:Grease nipple B', 'same:Wipe excess'])
    expect(entries[3]!.before!.position).toBe('Unit 1, step 2')
    expect(entries[3]!.after!.position).toBe('Unit 2, step 1')
  })

  it('lists a removed unit with everything in it', () => {
    const older: BreakdownContent = { units: [{ id: id(), title: 'One', steps: [step('x')] }, { id: id(), title: 'Two', steps: [step('y', [kp('knack', 'z', 'r')])] }] }
    const newer = { units: [clone(older.units[0]!)] }
    expect(byStatus(diffBreakdowns(older, newer))).toEqual(['same:One', 'same:x', 'removed:Two', 'removed:y', 'removed:z'])
  })

  // Reference: the textbook dynamic-programming LCS length (Cormen, Leiserson, Rivest & Stein,
  // Introduction to Algorithms, LCS-LENGTH). Steps that must be marked "moved" after a pure
  // reordering are exactly those outside one longest common subsequence: n − LCS(old, new).
  it('marks the fewest steps moved: n minus the LCS of the two orders (CLRS LCS-LENGTH)', () => {
    const lcs = (a: string[], b: string[]) => {
      const t = Array.from({ length: a.length + 1 }, () => Array<number>(b.length + 1).fill(0))
      for (let i = 1; i <= a.length; i++) for (let j = 1; j <= b.length; j++) t[i]![j] = a[i - 1] === b[j - 1] ? t[i - 1]![j - 1]! + 1 : Math.max(t[i - 1]![j]!, t[i]![j - 1]!)
      return t[a.length]![b.length]!
    }
    fc.assert(fc.property(fc.integer({ min: 1, max: 12 }).chain(n => fc.tuple(fc.constant(n), fc.shuffledSubarray([...Array(n).keys()], { minLength: n, maxLength: n }))), ([n, perm]) => {
      const steps = Array.from({ length: n }, (_, i) => step(`Step ${i}`))
      const older = single(steps)
      const newer: BreakdownContent = { units: [{ ...older.units[0]!, steps: perm.map(i => steps[i]!) }] }
      const moved = diffBreakdowns(older, newer).filter(e => e.changes.includes('moved')).length
      return moved === n - lcs(steps.map(s => s.id), perm.map(i => steps[i]!.id))
    }), { numRuns: 300 })
  })
})
