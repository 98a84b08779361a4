import { describe, expect, it } from 'vitest'
import { elementsOf, passElementIds, replayLesson } from '../../shared/utils/lesson-state'
import type { LessonEvent } from '../../shared/utils/lesson-events'
import {
  elapsedWords, firstOpenIndex, formatElapsed, indexAfterMark, lastUndoable, nextPassKey, nextStandardPass, normaliseCursor,
  openPassOf, ordinal, passCards, passScoreWords, passTitle, cardLabel, prepareItems, recitedPositions, standardPassTypes,
} from '../../shared/utils/lesson-flow'
import { id, kp, single, step } from '../fixtures/breakdowns'

const content = single([
  step('Stop and lock out the slicer', [kp('safety', 'Own padlock on the isolator', 'Nobody can start it'), kp('quality', 'Try the start button', '')]),
  step('Open the blade guard', [kp('knack', 'Lift both latches together', 'One latch jams it')]),
  step('Fit the new blade set'),
])
const elements = elementsOf(content)
const [s1, s2, s3] = content.units[0]!.steps

function recorder() {
  const events: LessonEvent[] = []
  let seq = 0
  const add = (pass: string, kind: LessonEvent['kind'], elementId: string | null = null, value: string | null = null) => {
    seq += 1
    const e: LessonEvent = { id: `e${seq}`, lessonId: 'L', pass, elementId, kind, value, clientTime: 1000 + seq, deviceId: 'tablet', seq }
    events.push(e)
    return e
  }
  return { events, add }
}

describe('passes of a stage', () => {
  it('runs P1–P3 and T1–T4 by default', () => {
    expect(standardPassTypes('present', elements)).toEqual(['P1', 'P2', 'P3'])
    expect(standardPassTypes('tryout', elements)).toEqual(['T1', 'T2', 'T3', 'T4'])
  })

  it('leaves out the passes a breakdown has nothing for', () => {
    const bare = elementsOf(single([step('Weigh the dough'), step('Divide it')]))
    expect(standardPassTypes('present', bare)).toEqual(['P1'])
    expect(standardPassTypes('tryout', bare)).toEqual(['T1', 'T2'])
    const noReasons = elementsOf(single([step('Weigh the dough', [kp('quality', 'Tare the bowl first')])]))
    expect(standardPassTypes('present', noReasons)).toEqual(['P1', 'P2'])
    expect(standardPassTypes('tryout', noReasons)).toEqual(['T1', 'T2', 'T3'])
  })

  it('offers the next default pass not yet opened, then none', () => {
    const r = recorder()
    expect(nextStandardPass('tryout', replayLesson(r.events, content), elements)).toBe('T1')
    r.add('T1-1', 'pass-open')
    r.add('T1-1', 'pass-close')
    expect(nextStandardPass('tryout', replayLesson(r.events, content), elements)).toBe('T2')
    for (const key of ['T2-1', 'T3-1', 'T4-1']) r.add(key, 'pass-open')
    const state = replayLesson(r.events, content)
    expect(nextStandardPass('tryout', state, elements)).toBeNull()
    expect(nextStandardPass('present', state, elements)).toBe('P1')
    expect(nextPassKey(state, 'T3')).toBe('T3-2')
    expect(nextPassKey(state, 'P2')).toBe('P2-1')
  })

  it('returns to the newest pass of the stage still open', () => {
    const r = recorder()
    r.add('T1-1', 'pass-open')
    r.add('T1-1', 'pass-close')
    r.add('T2-1', 'pass-open')
    expect(openPassOf('tryout', replayLesson(r.events, content))?.key).toBe('T2-1')
    r.add('T2-1', 'pass-close')
    expect(openPassOf('tryout', replayLesson(r.events, content))).toBeNull()
    r.add('T3-2', 'pass-open')
    expect(openPassOf('tryout', replayLesson(r.events, content))?.key).toBe('T3-2')
    expect(openPassOf('present', replayLesson(r.events, content))).toBeNull()
  })
})

describe('cards of a pass', () => {
  it('line up with the pass\'s elements, one step or key point each', () => {
    for (const type of ['P1', 'P2', 'P3', 'T1', 'T2', 'T3', 'T4'] as const) {
      expect(passCards(type, content).map(c => c.elementId)).toEqual(passElementIds(type, elements))
    }
    const t4 = passCards('T4', content)
    expect(t4.map(c => [c.stepNumber, c.keyPointNumber, c.keyPoint?.text])).toEqual([[1, 1, 'Own padlock on the isolator'], [2, 1, 'Lift both latches together']])
  })

  it('counts steps across units', () => {
    const units = { units: [
      { id: id(), title: 'Mix', steps: [step('Weigh'), step('Mix')] },
      { id: id(), title: 'Shape', steps: [step('Divide')] },
    ] }
    const cards = passCards('T1', units)
    expect(cards.map(c => [c.stepNumber, c.stepCount, c.unitNumber, c.unitTitle])).toEqual([[1, 3, 1, 'Mix'], [2, 3, 1, 'Mix'], [3, 3, 2, 'Shape']])
  })
})

describe('the cursor', () => {
  const r = recorder()
  r.add('T3-1', 'pass-open')
  const state = replayLesson(r.events, content)

  it('keeps a cursor that points at an opened pass, with the index inside it', () => {
    expect(normaliseCursor({ stage: 'tryout', pass: 'T3-1', index: 2 }, state, elements)).toEqual({ stage: 'tryout', pass: 'T3-1', index: 2 })
    // T3 has three key points: index 7 is clamped to the last.
    expect(normaliseCursor({ stage: 'tryout', pass: 'T3-1', index: 7 }, state, elements)).toEqual({ stage: 'tryout', pass: 'T3-1', index: 2 })
    expect(normaliseCursor({ stage: 'tryout', pass: 'T3-1', index: -3 }, state, elements).index).toBe(0)
  })

  it('falls back to the stage overview for a pass never opened or of another stage', () => {
    expect(normaliseCursor({ stage: 'tryout', pass: 'T4-1', index: 1 }, state, elements)).toEqual({ stage: 'tryout', pass: null, index: 0 })
    expect(normaliseCursor({ stage: 'present', pass: 'T3-1', index: 1 }, state, elements)).toEqual({ stage: 'present', pass: null, index: 0 })
    expect(normaliseCursor({ stage: 'followup', pass: 'T3-1', index: 1 }, state, elements)).toEqual({ stage: 'followup', pass: null, index: 0 })
    expect(normaliseCursor({ stage: 'nowhere' as never, pass: null, index: 0 }, state, elements)).toEqual({ stage: 'prepare', pass: null, index: 0 })
    expect(normaliseCursor(null, state, elements)).toEqual({ stage: 'prepare', pass: null, index: 0 })
  })

  it('moves on after a mark and stays on the last element', () => {
    expect(indexAfterMark(0, 3)).toBe(1)
    expect(indexAfterMark(2, 3)).toBe(2)
    expect(indexAfterMark(0, 0)).toBe(0)
  })

  it('finds the first element not yet marked', () => {
    const m = recorder()
    m.add('T1-1', 'mark', s1!.id, 'unaided')
    m.add('T1-1', 'mark', s3!.id, 'cued')
    const pass = replayLesson(m.events, content).latest.T1!
    expect(firstOpenIndex(pass, passElementIds('T1', elements))).toBe(1)
    m.add('T1-1', 'mark', s2!.id, 'missed')
    expect(firstOpenIndex(replayLesson(m.events, content).latest.T1!, passElementIds('T1', elements))).toBe(0)
  })
})

describe('undo', () => {
  it('takes back the newest mark of the pass still in effect, one at a time', () => {
    const r = recorder()
    const a = r.add('T2-1', 'order', s1!.id)
    const b = r.add('T2-1', 'mark', s1!.id, 'unaided')
    r.add('T1-1', 'mark', s2!.id, 'missed')
    r.add('T2-1', 'pass-open')
    expect(lastUndoable(r.events, 'T2-1')?.id).toBe(b.id)
    r.add('T2-1', 'undo', b.elementId, b.id)
    expect(lastUndoable(r.events, 'T2-1')?.id).toBe(a.id)
    r.add('T2-1', 'undo', a.elementId, a.id)
    expect(lastUndoable(r.events, 'T2-1')).toBeNull()
    expect(lastUndoable(r.events, 'T1-1')?.value).toBe('missed')
  })

  it('never offers a pass-open, a pass-close or an undo itself', () => {
    const r = recorder()
    r.add('P1-1', 'pass-open')
    const p = r.add('P1-1', 'present', s1!.id)
    r.add('P1-1', 'pass-close')
    expect(lastUndoable(r.events, 'P1-1')?.id).toBe(p.id)
  })
})

describe('words', () => {
  it('says the live pass score and how many are marked', () => {
    const r = recorder()
    r.add('T1-1', 'mark', s1!.id, 'unaided')
    r.add('T1-1', 'mark', s2!.id, 'cued')
    const pass = replayLesson(r.events, content).latest.T1!
    // (1 + 0.5 + 0) / 3 × 100 = 50: the unmarked step counts as missed (DESIGN.md §8).
    expect(passScoreWords(pass, passElementIds('T1', elements))).toBe('Pass score 50 — 2 of 3 marked')
    r.add('T1-1', 'mark', s3!.id, 'unaided')
    expect(passScoreWords(replayLesson(r.events, content).latest.T1!, passElementIds('T1', elements))).toBe('Pass score 83.3 — 3 of 3 marked')
  })

  it('numbers the recited order', () => {
    const r = recorder()
    r.add('T2-1', 'order', s2!.id)
    r.add('T2-1', 'order', s1!.id)
    const positions = recitedPositions(replayLesson(r.events, content).latest.T2!)
    expect([positions.get(s2!.id), positions.get(s1!.id), positions.get(s3!.id)]).toEqual([1, 2, undefined])
    expect([1, 2, 3, 4, 11, 12, 13, 21, 22, 101, 111].map(ordinal)).toEqual(['1st', '2nd', '3rd', '4th', '11th', '12th', '13th', '21st', '22nd', '101st', '111th'])
  })

  it('shows elapsed time as a stopwatch and in words', () => {
    expect([0, 7, 65, 245, 3729].map(formatElapsed)).toEqual(['0:00', '0:07', '1:05', '4:05', '1:02:09'])
    expect(elapsedWords(245)).toBe('4 minutes 5 seconds')
    expect(elapsedWords(1)).toBe('1 second')
    expect(elapsedWords(3600)).toBe('1 hour 0 minutes 0 seconds')
  })

  it('lists stage 1: each tool and material, the workplace, then the four items for the worker', () => {
    const items = prepareItems({ toolsAndMaterials: ['Padlock and tag', 'New blade set'], workplaceArrangement: 'Blade box on the left' })
    expect(items.map(i => i.key)).toEqual(['ready:tool:0', 'ready:tool:1', 'ready:workplace', 'worker:ease', 'worker:state-job', 'worker:interest', 'worker:position'])
    expect(items[2]!.detail).toBe('Blade box on the left')
    expect(new Set(items.map(i => i.key)).size).toBe(items.length)
  })
})

describe('titles', () => {
  it('names a pass and a card in words', () => {
    expect(passTitle({ type: 'T2', number: 1 })).toBe('T2: Does it and tells the steps')
    expect(passTitle({ type: 'P3', number: 2 })).toBe('P3: Again, with the reasons (run 2)')
    expect(passCards('T3', content).map(c => cardLabel(c, 'T3'))).toEqual(['Key point 1.1', 'Key point 1.2', 'Key point 2.1'])
    expect(passCards('T4', content).map(c => cardLabel(c, 'T4'))).toEqual(['Reason 1.1', 'Reason 2.1'])
    expect(passCards('P1', content).map(c => cardLabel(c, 'P1'))).toEqual(['Step 1', 'Step 2', 'Step 3'])
  })
})
