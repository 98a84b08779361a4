// The derived training state of a plan cell (DESIGN.md §8; Fourfold's own precedence, issue 6).
// Dates are built in local time, like the rule itself works in local calendar days.
import { describe, expect, it } from 'vitest'
import { CELL_STATUSES } from '../../shared/types/plan'
import { firstCheckDate, nextCheckDate, nextIntervalIndex, SPOT_CHECK_INTERVAL_DAYS, type CheckOutcome } from '../../shared/utils/spot-check-schedule'
import { CELL_STATUS_WORDS, dayBounds, dayStart, endOfDay, isReadyNow, localDay, shortDate, shortDay, startOfDay, trainingCell, type TrainingFacts } from '../../shared/utils/training-status'

const at = (day: string, hour = 10) => dayStart(day) + hour * 3_600_000
const NOW = at('2026-12-02', 9)

const v1 = { id: 'v1', number: 1 }
const v2 = { id: 'v2', number: 2 }

function facts(over: Partial<TrainingFacts> = {}): TrainingFacts {
  return { planItem: null, current: v1, lessons: [], lessonInProgress: false, checks: [], ...over }
}
function plan(targetDate: string | null) {
  return { id: 'p1', targetDate, reason: 'new-job' as const, note: '' }
}
function lesson(signedOffAt: number, decision: 'ready' | 'another-pass' | null = 'ready', version = v1, focus: string[] | null = null, id = `l-${signedOffAt}`) {
  return { id, versionId: version.id, versionNumber: version.number, signedOffAt, decision, focus }
}
/** A finished check as the server stores it: next index and date from the taper rules. */
function check(finishedAt: number, outcome: CheckOutcome, dueIndex: number) {
  const next = nextIntervalIndex(dueIndex, outcome)
  return { id: `c-${finishedAt}`, finishedAt, outcome, nextIntervalIndex: next, nextDueAt: nextCheckDate(new Date(finishedAt), next).getTime() }
}

describe('day helpers', () => {
  it('writes dates as "3 Nov", with the year only when it is not this year', () => {
    expect(shortDate(at('2026-09-03'), NOW)).toBe('3 Sep')
    expect(shortDate(at('2025-12-31'), NOW)).toBe('31 Dec 2025')
    expect(shortDay('2026-01-05', NOW)).toBe('5 Jan')
    expect(shortDay('2027-06-30', NOW)).toBe('30 Jun 2027')
    expect(dayBounds(NOW)).toEqual({ today: '2026-12-02', start: dayStart('2026-12-02'), end: dayStart('2026-12-03') - 1 })
  })

  it('works in local calendar days', () => {
    expect(localDay(at('2026-12-02', 23))).toBe('2026-12-02')
    expect(startOfDay(at('2026-12-02', 15))).toBe(dayStart('2026-12-02'))
    expect(endOfDay(at('2026-12-02', 1))).toBe(dayStart('2026-12-03') - 1)
  })
})

describe('each status', () => {
  it('not needed: nothing at all', () => {
    const cell = trainingCell(facts(), NOW)
    expect(cell).toMatchObject({ status: 'not-needed', words: 'Not needed', readySince: null, nextCheckAt: null, late: false })
  })

  it('planned: a plan item, with or without a date', () => {
    expect(trainingCell(facts({ planItem: plan('2026-12-20') }), NOW)).toMatchObject({ status: 'planned', words: 'Planned by 20 Dec' })
    expect(trainingCell(facts({ planItem: plan(null) }), NOW)).toMatchObject({ status: 'planned', words: 'Planned, no date set' })
    expect(trainingCell(facts({ planItem: plan('2027-01-15') }), NOW).words).toBe('Planned by 15 Jan 2027')
  })

  it('in training: a lesson in progress, or a signed-off lesson that asked for another pass', () => {
    expect(trainingCell(facts({ lessonInProgress: true }), NOW)).toMatchObject({ status: 'in-training', words: 'In training' })
    expect(trainingCell(facts({ lessons: [lesson(at('2026-11-30'), 'another-pass')] }), NOW).status).toBe('in-training')
    expect(trainingCell(facts({ lessons: [lesson(at('2026-11-30'), null)] }), NOW).status).toBe('in-training')
    expect(trainingCell(facts({ lessonInProgress: true, planItem: plan('2026-12-10') }), NOW).words).toBe('In training, planned by 10 Dec')
  })

  it('ready: the latest signed-off lesson said ready; the first check is not due yet', () => {
    const signedOff = at('2026-12-02', 8)
    const cell = trainingCell(facts({ lessons: [lesson(signedOff)] }), NOW)
    expect(cell).toMatchObject({
      status: 'ready',
      words: 'Ready since 2 Dec',
      readySince: signedOff,
      trainedVersionId: 'v1',
      trainedVersionNumber: 1,
      nextCheckAt: firstCheckDate(new Date(signedOff)).getTime(),
      nextIntervalIndex: 0,
      reteachBecause: null,
      overdueCheck: false,
    })
    expect(isReadyNow(cell.status)).toBe(true)
  })

  it('check due: ready and the next check falls today (or earlier: overdue)', () => {
    const today = trainingCell(facts({ lessons: [lesson(at('2026-12-01', 16))] }), NOW)
    expect(today).toMatchObject({ status: 'check-due', words: 'Spot check due 2 Dec', overdueCheck: false })
    expect(isReadyNow(today.status)).toBe(true)
    const overdue = trainingCell(facts({ lessons: [lesson(at('2026-11-20'))] }), NOW)
    expect(overdue).toMatchObject({ status: 'check-due', words: 'Spot check overdue since 21 Nov', overdueCheck: true })
  })

  it('re-teach: a failed check after the sign-off', () => {
    const signedOff = at('2026-11-20')
    const cell = trainingCell(facts({ lessons: [lesson(signedOff)], checks: [check(at('2026-11-21'), 'reteach', 0)] }), NOW)
    expect(cell).toMatchObject({ status: 'reteach', reteachBecause: 'failed-check', words: 'Re-teach: spot check failed 21 Nov', nextCheckAt: null, readySince: signedOff })
    expect(isReadyNow(cell.status)).toBe(false)
  })

  it('re-teach: a newer version was published than the one they were trained on', () => {
    const cell = trainingCell(facts({ current: v2, lessons: [lesson(at('2026-11-20'))] }), NOW)
    expect(cell).toMatchObject({ status: 'reteach', reteachBecause: 'new-version', words: 'Re-teach: version 2 published', trainedVersionNumber: 1, nextCheckAt: null })
  })

  it('late: the target date has passed and they are not ready', () => {
    expect(trainingCell(facts({ planItem: plan('2026-12-01') }), NOW)).toMatchObject({ status: 'late', late: true, words: 'Late: planned by 1 Dec' })
    expect(trainingCell(facts({ planItem: plan('2026-12-01'), lessonInProgress: true }), NOW).status).toBe('late')
    // The target day itself is not late yet.
    expect(trainingCell(facts({ planItem: plan('2026-12-02') }), NOW)).toMatchObject({ status: 'planned', late: false })
  })

  it('has words for every status', () => {
    for (const s of CELL_STATUSES) expect(CELL_STATUS_WORDS[s]).toBeTruthy()
  })
})

describe('precedence: reteach > check-due > ready > late > in-training > planned > not-needed', () => {
  it('re-teach beats a due check and a late plan, and keeps the late flag', () => {
    const cell = trainingCell(facts({ planItem: plan('2026-11-01'), current: v2, lessons: [lesson(at('2026-11-01'))] }), NOW)
    expect(cell.status).toBe('reteach')
    expect(cell.late).toBe(true)
  })

  it('a failed check is named before a new version when both apply', () => {
    const cell = trainingCell(facts({ current: v2, lessons: [lesson(at('2026-11-20'))], checks: [check(at('2026-11-21'), 'reteach', 0)] }), NOW)
    expect(cell.reteachBecause).toBe('failed-check')
  })

  it('a due check and being ready beat a passed target date (ready is never late)', () => {
    const due = trainingCell(facts({ planItem: plan('2026-11-01'), lessons: [lesson(at('2026-11-20'))] }), NOW)
    expect(due).toMatchObject({ status: 'check-due', late: false })
    const ready = trainingCell(facts({ planItem: plan('2026-11-01'), lessons: [lesson(at('2026-12-02', 8))] }), NOW)
    expect(ready).toMatchObject({ status: 'ready', late: false })
  })

  it('late beats in training, in training beats planned', () => {
    expect(trainingCell(facts({ planItem: plan('2026-11-01'), lessons: [lesson(at('2026-11-20'), 'another-pass')] }), NOW).status).toBe('late')
    expect(trainingCell(facts({ planItem: plan('2026-12-20'), lessons: [lesson(at('2026-11-20'), 'another-pass')] }), NOW).status).toBe('in-training')
  })

  it('the latest signed-off lesson decides, whatever order they come in', () => {
    const first = lesson(at('2026-11-01'), 'ready')
    const later = lesson(at('2026-11-10'), 'another-pass')
    expect(trainingCell(facts({ lessons: [first, later] }), NOW).status).toBe('in-training')
    expect(trainingCell(facts({ lessons: [later, first] }), NOW).status).toBe('in-training')
    const again = lesson(at('2026-12-02', 7), 'ready')
    expect(trainingCell(facts({ lessons: [again, first, later] }), NOW)).toMatchObject({ status: 'ready', readySince: again.signedOffAt })
  })
})

describe('the taper as it shows in the cell (spot-check-schedule.ts)', () => {
  const signedOff = at('2026-11-01')

  it('walks 1, 2, 4, 7, 14, 30, 60 days on clean checks, each check done on its due day', () => {
    let checks: TrainingFacts['checks'] = []
    let due = firstCheckDate(new Date(signedOff)).getTime()
    let index = 0
    for (let step = 0; step < SPOT_CHECK_INTERVAL_DAYS.length + 1; step++) {
      // Just before the due day: ready, with the next check named; on the day: check due.
      const before = trainingCell(facts({ lessons: [lesson(signedOff)], checks }), startOfDay(due) - 1)
      expect(before).toMatchObject({ status: 'ready', nextCheckAt: due, nextIntervalIndex: index })
      expect(trainingCell(facts({ lessons: [lesson(signedOff)], checks }), due).status).toBe('check-due')
      const done = check(due, 'clean', index)
      checks = [...checks, done]
      const expectedIndex = Math.min(index + 1, SPOT_CHECK_INTERVAL_DAYS.length - 1)
      expect(done.nextIntervalIndex).toBe(expectedIndex)
      index = expectedIndex
      due = done.nextDueAt
    }
    // Past the end of the list the interval stays at 60 days.
    expect(index).toBe(SPOT_CHECK_INTERVAL_DAYS.length - 1)
  })

  it('first check after sign-off: one day later, index 0', () => {
    const cell = trainingCell(facts({ lessons: [lesson(signedOff)] }), signedOff)
    expect(cell.nextCheckAt).toBe(nextCheckDate(new Date(signedOff), 0).getTime())
    expect(cell.nextIntervalIndex).toBe(0)
  })

  it('after a clean check: one step up', () => {
    const c = check(at('2026-11-02'), 'clean', 0)
    const cell = trainingCell(facts({ lessons: [lesson(signedOff)], checks: [c] }), at('2026-11-02', 12))
    expect(cell).toMatchObject({ status: 'ready', nextIntervalIndex: 1, nextCheckAt: nextCheckDate(new Date(c.finishedAt), 1).getTime() })
  })

  it('after a "stay" check: the same interval again', () => {
    const c1 = check(at('2026-11-02'), 'clean', 0)
    const c2 = check(at('2026-11-04'), 'stay', 1)
    const cell = trainingCell(facts({ lessons: [lesson(signedOff)], checks: [c2, c1] }), at('2026-11-04', 12))
    expect(cell).toMatchObject({ status: 'ready', nextIntervalIndex: 1, nextCheckAt: nextCheckDate(new Date(c2.finishedAt), 1).getTime() })
  })

  it('after a re-teach check: re-teach, and a new ready lesson starts the taper again at index 0', () => {
    const failed = check(at('2026-11-02'), 'reteach', 0)
    expect(trainingCell(facts({ lessons: [lesson(signedOff)], checks: [failed] }), at('2026-11-03')).status).toBe('reteach')
    const retaught = lesson(at('2026-11-05'))
    const cell = trainingCell(facts({ lessons: [lesson(signedOff), retaught], checks: [failed] }), at('2026-11-05', 12))
    expect(cell).toMatchObject({ status: 'ready', readySince: retaught.signedOffAt, nextIntervalIndex: 0, nextCheckAt: firstCheckDate(new Date(retaught.signedOffAt)).getTime() })
  })

  it('checks from before the sign-off are ignored', () => {
    const old = check(at('2026-10-20'), 'reteach', 0)
    expect(trainingCell(facts({ lessons: [lesson(signedOff)], checks: [old] }), at('2026-11-01', 12)).status).toBe('ready')
  })
})

describe('re-teaching on a new version', () => {
  it('a refresher lesson (focus set) on the current version clears it and moves them to that version', () => {
    const full = lesson(at('2026-11-01'))
    const refresher = lesson(at('2026-12-02', 7), 'ready', v2, ['k1', 'k2'])
    expect(trainingCell(facts({ current: v2, lessons: [full] }), NOW).status).toBe('reteach')
    const cell = trainingCell(facts({ current: v2, lessons: [full, refresher] }), NOW)
    expect(cell).toMatchObject({ status: 'ready', trainedVersionId: 'v2', trainedVersionNumber: 2, reteachBecause: null, readySince: refresher.signedOffAt })
  })

  it('a refresher that ends with "another pass" leaves them in training', () => {
    const cell = trainingCell(facts({ current: v2, lessons: [lesson(at('2026-11-01')), lesson(at('2026-12-01'), 'another-pass', v2, ['k1'])] }), NOW)
    expect(cell.status).toBe('in-training')
  })

  it('no published version: nothing to be behind on', () => {
    expect(trainingCell(facts({ current: null, lessons: [lesson(at('2026-12-02', 7))] }), NOW).status).toBe('ready')
  })
})
