// Refreshers after a new breakdown version: which elements are taught again (changedElementIds),
// what the refresher lesson works on (focusContent), and the change list in words (changeLines).
import { describe, expect, it } from 'vitest'
import { focusContent } from '../../shared/utils/refresher'
import { changedElementIds, changeLines, focusWords } from '../../shared/utils/refresher-changes'
import { withBreakdownNumbers } from '../../shared/utils/refresher-cards'
import { passCards } from '../../shared/utils/lesson-flow'
import { elementsOf, replayLesson } from '../../shared/utils/lesson-state'
import type { BreakdownContent } from '../../shared/schemas/breakdown'
import { kp, single, step } from '../fixtures/breakdowns'

const clone = <T>(v: T): T => structuredClone(v)

function slicer(): BreakdownContent {
  return single([
    step('Stop slicer', [kp('safety', 'Lock out the isolator', 'Blades coast for a minute')]),
    step('Open blade guard', [kp('knack', 'Lift both latches together', 'One latch jams the guard')]),
    step('Remove blade set', [kp('safety', 'Cut-resistant gloves', 'Blades are sharp')]),
    step('Fit new set'),
  ])
}
const steps = (c: BreakdownContent) => c.units[0]!.steps

describe('changedElementIds', () => {
  it('is empty when nothing changed', () => {
    const v1 = slicer()
    expect(changedElementIds(v1, clone(v1))).toEqual([])
  })

  it('names a moved step (order only), and not the steps that kept their order', () => {
    const v1 = slicer()
    const v2 = clone(v1)
    steps(v2).unshift(steps(v2).splice(2, 1)[0]!) // "Remove blade set" to the top
    expect(changedElementIds(v1, v2)).toEqual([steps(v1)[2]!.id])
  })

  it('names only the new key point when it is added to an unchanged step', () => {
    const v1 = slicer()
    const v2 = clone(v1)
    const added = kp('safety', 'Blade guard back on before restart', 'Exposed blades cut')
    steps(v2)[3]!.keyPoints.push(added)
    expect(changedElementIds(v1, v2)).toEqual([added.id])
  })

  it('leaves out a removed step and its key points (they cannot be taught), keeps a reworded one', () => {
    const v1 = slicer()
    const v2 = clone(v1)
    steps(v2).splice(1, 1) // "Open blade guard" and its knack removed
    steps(v2)[0]!.text = 'Stop the slicer at the panel'
    const ids = changedElementIds(v1, v2)
    expect(ids).toEqual([steps(v1)[0]!.id])
    expect(ids).not.toContain(steps(v1)[1]!.id)
    expect(ids).not.toContain(steps(v1)[1]!.keyPoints[0]!.id)
  })

  it('names a key point whose kind or reason changed', () => {
    const v1 = slicer()
    const v2 = clone(v1)
    steps(v2)[1]!.keyPoints[0]!.kind = 'safety'
    steps(v2)[2]!.keyPoints[0]!.reason = 'Blades are sharp enough to cut through a glove seam'
    expect(changedElementIds(v1, v2)).toEqual([steps(v1)[1]!.keyPoints[0]!.id, steps(v1)[2]!.keyPoints[0]!.id])
  })
})

describe('focusContent', () => {
  it('keeps everything when focus is null', () => {
    const v = slicer()
    expect(focusContent(v, null)).toBe(v)
    expect(focusContent(v, undefined)).toBe(v)
  })

  it('keeps a focused step with all its key points, and a step holding a focused key point with only that key point', () => {
    const v2 = slicer()
    const added = kp('safety', 'Blade guard back on before restart', 'Exposed blades cut')
    steps(v2)[3]!.keyPoints.push(kp('quality', 'Frame pins seated', ''), added)
    const focused = focusContent(v2, [steps(v2)[0]!.id, added.id])
    expect(steps(focused).map(s => s.text)).toEqual(['Stop slicer', 'Fit new set'])
    expect(steps(focused)[0]!.keyPoints.map(k => k.text)).toEqual(['Lock out the isolator'])
    expect(steps(focused)[1]!.keyPoints.map(k => k.id)).toEqual([added.id])
    // The original is untouched.
    expect(steps(v2)).toHaveLength(4)
    expect(steps(v2)[3]!.keyPoints).toHaveLength(2)
  })

  it('keeps the newer order of a moved step', () => {
    const v1 = slicer()
    const v2 = clone(v1)
    steps(v2).unshift(steps(v2).splice(2, 1)[0]!)
    steps(v2)[3]!.text = 'Fit the new set'
    const focused = focusContent(v2, changedElementIds(v1, v2))
    expect(steps(focused).map(s => s.text)).toEqual(['Remove blade set', 'Fit the new set'])
  })

  it('drops units left empty and gives nothing for an empty focus', () => {
    const v: BreakdownContent = { units: [{ ...slicer().units[0]!, title: 'Unit A' }, { ...single([step('Clean the tray')]).units[0]!, title: 'Unit B' }] }
    const target = v.units[1]!.steps[0]!.id
    expect(focusContent(v, [target]).units.map(u => u.title)).toEqual(['Unit B'])
    expect(focusContent(v, []).units).toEqual([])
    expect(focusContent(v, ['00000000-0000-4000-8000-ffffffffffff']).units).toEqual([])
  })

  it('scores a refresher over the focused elements only: the unfocused steps are not counted as missed', () => {
    const v1 = slicer()
    const v2 = clone(v1)
    steps(v2)[1]!.text = 'Swing the blade guard open'
    const focused = focusContent(v2, changedElementIds(v1, v2))
    const only = steps(v2)[1]!
    const ev = (seq: number, pass: string, kind: 'mark' | 'order-all', elementId: string | null, value: string | null) =>
      ({ id: `e${seq}`, lessonId: 'L', pass, elementId, kind, value, clientTime: seq, deviceId: 'd', seq })
    const events = [
      ev(1, 'T1-1', 'mark', only.id, 'unaided'),
      ev(2, 'T2-1', 'order-all', null, null),
      ev(3, 'T2-1', 'mark', only.id, 'unaided'),
      ev(4, 'T3-1', 'mark', only.keyPoints[0]!.id, 'unaided'),
      ev(5, 'T4-1', 'mark', only.keyPoints[0]!.id, 'unaided'),
    ]
    expect(elementsOf(focused).steps.map(s => s.id)).toEqual([only.id])
    const onFocus = replayLesson(events, focused)
    expect(onFocus.scores.recall).toBe(100)
    expect(onFocus.readiness.suggestion).toBe('ready')
    // The same marks against the whole version would leave three steps unmarked.
    expect(replayLesson(events, v2).readiness.suggestion).toBe('another-pass')
  })
})

describe('changeLines', () => {
  it('says a reworded step and a new safety key point in words, in the newer order, and marks both taught', () => {
    const v1 = slicer()
    const v2 = clone(v1)
    steps(v2)[2]!.text = 'Lift out the blade set with the carrier'
    steps(v2)[1]!.keyPoints.push(kp('safety', 'Keep fingers off the blade edge', 'Blades are sharp'))
    expect(changeLines(v1, v2).map(l => [l.words, l.taught])).toEqual([
      ['New safety key point on step 2: “Keep fingers off the blade edge”', true],
      ['Step 3 reworded: “Lift out the blade set with the carrier”', true],
    ])
  })

  it('says moves with the old place, removals, kind and reason changes', () => {
    const v1 = slicer()
    const v2 = clone(v1)
    steps(v2).unshift(steps(v2).splice(2, 1)[0]!) // Remove blade set → step 1
    steps(v2).splice(3, 1) // Fit new set removed
    steps(v2)[2]!.keyPoints[0]!.kind = 'safety' // Open blade guard's knack, now step 3
    steps(v2)[1]!.keyPoints[0]!.reason = 'The blades coast for a full minute'
    steps(v2).push(step('Run a test slice'))
    expect(changeLines(v1, v2).map(l => `${l.taught ? '+' : '-'} ${l.words}`)).toEqual([
      '+ Step 1 moved (was step 3): “Remove blade set”',
      '+ Step 2, key point 1 has a new reason: “The blades coast for a full minute”',
      '+ Step 3, key point 1 is now a safety key point (was knack): “Lift both latches together”',
      '- Step removed (was step 4): “Fit new set”',
      '+ New step: Step 4, “Run a test slice”',
    ])
  })

  it('is empty when nothing changed, and ignores an untitled unit', () => {
    const v1 = slicer()
    expect(changeLines(v1, clone(v1))).toEqual([])
  })
})

describe('focusWords', () => {
  it('counts the steps and key points the runner will show (a focused step brings its key points, a focused key point its step)', () => {
    const v = slicer()
    expect(focusWords(v, [steps(v)[3]!.id])).toBe('1 step')
    expect(focusWords(v, [steps(v)[0]!.id])).toBe('1 step and 1 key point')
    expect(focusWords(v, [steps(v)[0]!.id, steps(v)[1]!.keyPoints[0]!.id, steps(v)[2]!.keyPoints[0]!.id])).toBe('3 steps and 3 key points')
    expect(focusWords(v, [])).toBe('nothing to teach again')
  })
})

describe('withBreakdownNumbers', () => {
  it('numbers a refresher\'s cards as the whole breakdown does', () => {
    const v2 = slicer()
    const added = kp('safety', 'Blade guard back on before restart', 'Exposed blades cut')
    steps(v2)[2]!.keyPoints.push(added)
    const focused = focusContent(v2, [steps(v2)[1]!.id, added.id])
    const t3 = withBreakdownNumbers(passCards('T3', focused), v2)
    expect(t3.map(c => [c.stepNumber, c.keyPointNumber, c.stepCount])).toEqual([[2, 1, 4], [3, 2, 4]])
    const t1 = withBreakdownNumbers(passCards('T1', focused), v2)
    expect(t1.map(c => [c.elementId, c.stepNumber, c.keyPointNumber])).toEqual([[steps(v2)[1]!.id, 2, null], [steps(v2)[2]!.id, 3, null]])
    // Without focus the numbers are the same as before.
    expect(withBreakdownNumbers(passCards('T3', v2), v2)).toEqual(passCards('T3', v2))
  })
})
