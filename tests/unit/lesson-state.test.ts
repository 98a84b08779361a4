import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { replayLesson } from '../../shared/utils/lesson-state'
import type { LessonEvent } from '../../shared/utils/lesson-events'
import { kp, single, step } from '../fixtures/breakdowns'

const content = single([
  step('Stop and lock out slicer', [kp('safety', 'Own padlock on the isolator', 'Nobody can start it')]),
  step('Open the blade guard', [kp('knack', 'Lift both latches together', 'One latch jams it')]),
  step('Fit the new blade set', [kp('quality', 'Seat both pins', '')]),
])
const [s1, s2, s3] = content.units[0]!.steps
const [k1, k2, k3] = [s1!.keyPoints[0]!, s2!.keyPoints[0]!, s3!.keyPoints[0]!]

function recorder(deviceId = 'tablet-a') {
  const events: LessonEvent[] = []
  let seq = 0
  const add = (pass: string, kind: LessonEvent['kind'], elementId: string | null = null, value: string | null = null) => {
    seq += 1
    const e = { id: `${deviceId}-${seq}`, lessonId: 'L', pass, elementId, kind, value, clientTime: 1000 + seq, deviceId, seq }
    events.push(e)
    return e
  }
  return { events, add }
}

function perfectLesson() {
  const r = recorder()
  for (const s of [s1, s2, s3]) r.add('T1-1', 'mark', s!.id, 'unaided')
  r.add('T1-1', 'pass-close')
  r.add('T2-1', 'order-all')
  for (const s of [s1, s2, s3]) r.add('T2-1', 'mark', s!.id, 'unaided')
  r.add('T2-1', 'pass-close')
  for (const k of [k1, k2, k3]) r.add('T3-1', 'mark', k.id, 'unaided')
  r.add('T3-1', 'pass-close')
  for (const k of [k1, k2]) r.add('T4-1', 'mark', k.id, 'unaided')
  r.add('T4-1', 'pass-close')
  return r
}

describe('lesson replay', () => {
  it('suggests ready after clean T1–T4 with the steps in order', () => {
    const state = replayLesson(perfectLesson().events, content)
    expect(state.scores).toEqual({ T1: 100, T2: 100, T3: 100, T4: 100, order: 100, recall: 100 })
    expect(state.readiness).toEqual({ suggestion: 'ready', represent: [] })
  })

  it('asks for another pass, safety first, when a safety key point was only cued', () => {
    const r = perfectLesson()
    r.add('T3-1', 'mark', k2.id, 'missed')
    r.add('T3-1', 'mark', k1.id, 'cued')
    const state = replayLesson(r.events, content)
    expect(state.scores.T3).toBe(50)
    expect(state.scores.recall).toBe(roundScore3([100, 50, 100]))
    expect(state.readiness.suggestion).toBe('another-pass')
    expect(state.readiness.represent.map(i => [i.text, i.why])).toEqual([
      ['Own padlock on the isolator', 'safety-not-unaided'],
      ['Lift both latches together', 'missed'],
    ])
  })

  it('needs the steps named in order, and counts T4 only over key points that have a reason', () => {
    const r = recorder()
    for (const s of [s1, s2, s3]) r.add('T1-1', 'mark', s!.id, 'unaided')
    for (const s of [s2, s1, s3]) r.add('T2-1', 'order', s!.id)
    for (const s of [s1, s2, s3]) r.add('T2-1', 'mark', s!.id, 'unaided')
    for (const k of [k1, k2, k3]) r.add('T3-1', 'mark', k.id, 'unaided')
    for (const k of [k1, k2]) r.add('T4-1', 'mark', k.id, 'unaided')
    const state = replayLesson(r.events, content)
    expect(state.scores.order).toBe(66.7)
    expect(state.scores.T4).toBe(100)
    expect(state.readiness.suggestion).toBe('another-pass')
    expect(state.readiness.represent.every(i => i.why === 'order')).toBe(true)
  })

  it('undo cancels a mark, and an undo of the undo brings it back', () => {
    const r = recorder()
    r.add('T1-1', 'mark', s1!.id, 'unaided')
    const wrong = r.add('T1-1', 'mark', s1!.id, 'missed')
    const undo = r.add('T1-1', 'undo', null, wrong.id)
    expect(replayLesson(r.events, content).latest.T1!.marks.get(s1!.id)).toBe('unaided')
    r.add('T1-1', 'undo', null, undo.id)
    expect(replayLesson(r.events, content).latest.T1!.marks.get(s1!.id)).toBe('missed')
  })

  it('uses the latest pass of each kind: an extra T3 pass replaces the first', () => {
    const r = perfectLesson()
    r.add('T3-1', 'mark', k1.id, 'missed')
    r.add('T3-2', 'pass-open')
    for (const k of [k1, k2, k3]) r.add('T3-2', 'mark', k.id, 'unaided')
    const state = replayLesson(r.events, content)
    expect(state.passes.filter(p => p.type === 'T3').map(p => [p.key, p.score])).toEqual([['T3-1', 66.7], ['T3-2', 100]])
    expect(state.readiness.suggestion).toBe('ready')
  })

  it('ignores marks for elements that are not in the pass, and forged pass keys', () => {
    const r = recorder()
    r.add('T3-1', 'mark', s1!.id, 'unaided')
    r.add('T9-1', 'mark', s1!.id, 'unaided')
    r.add('T1-1', 'mark', s1!.id, 'brilliant')
    const state = replayLesson(r.events, content)
    expect(state.latest.T3!.marks.size).toBe(0)
    expect(state.latest.T1!.marks.size).toBe(0)
    expect(state.passes.map(p => p.key)).toEqual(['T1-1', 'T3-1'])
  })

  it('gives the same state whatever order the events arrive in, and from two tablets', () => {
    const a = perfectLesson()
    const b = recorder('tablet-b')
    b.add('T3-2', 'mark', k2.id, 'cued')
    const all = [...a.events, ...b.events]
    const expected = replayLesson(all, content)
    fc.assert(fc.property(fc.shuffledSubarray(all, { minLength: all.length, maxLength: all.length }), (shuffled) => {
      const s = replayLesson(shuffled, content)
      return JSON.stringify(s.scores) === JSON.stringify(expected.scores) && JSON.stringify(s.readiness) === JSON.stringify(expected.readiness)
    }), { numRuns: 200 })
  })
})

function roundScore3(xs: number[]) {
  return Math.round((xs.reduce((a, b) => a + b, 0) / xs.length) * 10) / 10
}
