// A spot check's marks replayed: undo, marks after the finish, unmarked elements, the outcome and
// the next date (DESIGN.md §8: 1, 2, 4, 7, 14, 30, 60 days; clean moves up one, a missed safety
// key point or two misses go back to the first, otherwise stay — Fourfold's own rules).
import { describe, expect, it } from 'vitest'
import { checkResult, outcomeWords, replayCheck, type CheckEvent } from '../../shared/utils/check-state'
import { kp, single, step } from '../fixtures/breakdowns'

const content = single([
  step('Stop and lock out the slicer', [kp('safety', 'Own padlock on the isolator', 'Nobody can start it')]),
  step('Fit the new blade set', [kp('quality', 'Seat both pins', 'Half-seated blades tear loaves')]),
  step('Run one loaf first'),
])
const [s1, s2, s3] = content.units[0]!.steps
const safetyKp = s1!.keyPoints[0]!.id
const qualityKp = s2!.keyPoints[0]!.id
const elements = [s1!.id, safetyKp, `${safetyKp}:reason`, qualityKp, s3!.id]

let seq = 0
function mark(elementId: string, value: string, clientTime: number): CheckEvent {
  seq += 1
  return { id: `00000000-0000-4000-9000-${String(seq).padStart(12, '0')}`, checkId: 'c', elementId, kind: 'mark', value, clientTime, deviceId: 'd', seq }
}
function undo(target: CheckEvent, clientTime: number): CheckEvent {
  seq += 1
  return { id: `00000000-0000-4000-9000-${String(seq).padStart(12, '0')}`, checkId: 'c', elementId: null, kind: 'undo', value: target.id, clientTime, deviceId: 'd', seq }
}
const DAY = 86_400_000
const finishedAt = new Date(2026, 2, 10, 9, 0).getTime()

describe('replaying a check', () => {
  it('keeps the latest live mark per element; undo takes one back; marks after the finish do not count', () => {
    const a = mark(s1!.id, 'cued', 1)
    const b = mark(s1!.id, 'unaided', 2)
    const u = undo(b, 3)
    const late = mark(qualityKp, 'missed', finishedAt + 1)
    const state = replayCheck([late, u, b, a], elements, finishedAt)
    expect(state.marks.get(s1!.id)).toBe('cued')
    expect(state.marks.has(qualityKp)).toBe(false)
    expect(state.lastMarkId).toBe(a.id)
    expect(state.firstUnmarked).toBe(1)
    expect(replayCheck([late, u, b, a], elements, null).marks.get(qualityKp)).toBe('missed')
  })

  it('ignores marks of elements the check did not choose', () => {
    expect(replayCheck([mark('00000000-0000-4000-8000-999999999999', 'missed', 1)], elements).marks.size).toBe(0)
  })
})

describe('outcome and next date', () => {
  const all = (value: string) => elements.map((id, i) => mark(id, value, 10 + i))

  it('clean: every element unaided moves one step up the taper', () => {
    const r = checkResult({ elements, intervalIndex: 2, finishedAt }, all('unaided'), content)
    expect(r.outcome).toBe('clean')
    expect(r.nextIntervalIndex).toBe(3)
    // Index 3 is 7 days (DESIGN.md §8).
    expect(r.nextDueAt).toBe(new Date(2026, 2, 17, 9, 0).getTime())
    expect(outcomeWords(r).title).toMatch(/^Clean/)
  })

  it('stay: a cue, or one non-safety miss, keeps the gap', () => {
    const cued = checkResult({ elements, intervalIndex: 4, finishedAt }, [...all('unaided'), mark(qualityKp, 'cued', 99)], content)
    expect([cued.outcome, cued.nextIntervalIndex]).toEqual(['stay', 4])
    expect(cued.nextDueAt - finishedAt).toBeGreaterThanOrEqual(14 * DAY - 3_600_000)
    const oneMiss = checkResult({ elements, intervalIndex: 1, finishedAt }, [...all('unaided'), mark(s3!.id, 'missed', 99)], content)
    expect([oneMiss.outcome, oneMiss.nextIntervalIndex]).toEqual(['stay', 1])
  })

  it('re-teach: a missed safety key point (or its reason), or two misses, back to the first gap', () => {
    const safety = checkResult({ elements, intervalIndex: 5, finishedAt }, [...all('unaided'), mark(safetyKp, 'missed', 99)], content)
    expect([safety.outcome, safety.nextIntervalIndex]).toEqual(['reteach', 0])
    expect(safety.nextDueAt).toBe(new Date(2026, 2, 11, 9, 0).getTime())
    expect(outcomeWords(safety).why).toMatch(/safety key point was missed \(Own padlock on the isolator\)/)
    const reason = checkResult({ elements, intervalIndex: 5, finishedAt }, [...all('unaided'), mark(`${safetyKp}:reason`, 'missed', 99)], content)
    expect(reason.outcome).toBe('reteach')
    const two = checkResult({ elements, intervalIndex: 3, finishedAt }, [...all('unaided'), mark(s3!.id, 'missed', 98), mark(qualityKp, 'missed', 99)], content)
    expect(two.outcome).toBe('reteach')
  })

  it('counts an element left unmarked as missed', () => {
    const marks = elements.filter(id => id !== s3!.id && id !== qualityKp).map((id, i) => mark(id, 'unaided', i + 1))
    const r = checkResult({ elements, intervalIndex: 0, finishedAt }, marks, content)
    expect(r.outcome).toBe('reteach')
    expect(r.unmarked.map(e => e.id).sort()).toEqual([qualityKp, s3!.id].sort())
    expect(outcomeWords(r).why).toMatch(/2 left unmarked counted as missed/)
  })

  it('stays at 60 days once at the last step', () => {
    const r = checkResult({ elements, intervalIndex: 6, finishedAt }, all('unaided'), content)
    expect(r.nextIntervalIndex).toBe(6)
  })
})
