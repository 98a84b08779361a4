// Spot checks through the sync merge, in process against real SQLite files: outcome and next date
// computed on the server, idempotent replay, conflicts, a finished check closed, ids of other
// organisations and elements outside the breakdown refused with reasons, focus on lessons.
import { randomUUID } from 'node:crypto'
import { beforeAll, describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { mergePush } from '../../server/utils/sync-merge'
import { checkRows, lessonRows, makeWorld, type World } from '../support/merge-world'
import { kp, single, step } from '../fixtures/breakdowns'
import { nextCheckDate } from '../../shared/utils/spot-check-schedule'

const content = single([
  step('Stop and lock out slicer', [kp('safety', 'Own padlock on the isolator', 'Nobody can start it')]),
  step('Open the blade guard', [kp('knack', 'Lift both latches together', 'One latch jams it')]),
  step('Fit the new blade set', [kp('quality', 'Seat both pins', 'Half-seated blades tear loaves')]),
])
const steps = content.units[0]!.steps
const stepIds = steps.map(s => s.id)
const kpIds = steps.flatMap(s => s.keyPoints.map(k => k.id))
const elements = [stepIds[0]!, kpIds[0]!, `${kpIds[0]!}:reason`, stepIds[2]!, kpIds[2]!]

let w: World
beforeAll(async () => {
  w = await makeWorld(content)
})

function check(id: string, updatedAt: number, extra: Record<string, unknown> = {}) {
  return { id, coachUserId: w.coachUserId, learnerId: w.learnerId, jobId: w.jobId, versionId: w.versionId, lessonId: null, startedAt: 1000, updatedAt, elements, note: '', finishedAt: null, intervalIndex: 2, ...extra }
}
function marks(checkId: string, device: string, values: Record<string, string>, from = 2000) {
  return Object.entries(values).map(([elementId, value], i) => ({ id: randomUUID(), checkId, elementId, kind: 'mark', value, clientTime: from + i, deviceId: device, seq: i + 1 }))
}
const allUnaided = Object.fromEntries(elements.map(e => [e, 'unaided']))

describe('spot checks through sync', () => {
  it('stores a finished check with its outcome and next date, and a replay changes nothing', async () => {
    const id = randomUUID()
    const device = randomUUID()
    const finishedAt = new Date(2026, 4, 4, 10, 0).getTime()
    const push = { lessons: [], checks: [check(id, finishedAt, { finishedAt, note: 'Clean run' })], events: marks(id, device, allUnaided) }
    const first = await mergePush(w.client, w.organisationId, device, push)
    expect(first.rejected).toEqual([])
    expect(first.accepted).toHaveLength(1 + elements.length)
    expect(first.written).toMatchObject({ checks: 1, checkEvents: elements.length })
    // Clean at step 2 (4 days) moves to step 3: 7 days after the finish (DESIGN.md §8).
    expect(first.checks[id]).toEqual({ outcome: 'clean', nextIntervalIndex: 3, nextDueAt: nextCheckDate(new Date(finishedAt), 3).getTime() })
    const before = await checkRows(w.client, [id])
    expect(before.fed).toBe(true)
    const again = await mergePush(w.client, w.organisationId, device, push)
    expect(again.written).toMatchObject({ checks: 0, checkEvents: 0 })
    expect(again.accepted.sort()).toEqual(first.accepted.sort())
    expect(again.checks[id]).toEqual(first.checks[id])
    expect(await checkRows(w.client, [id])).toEqual(before)
  })

  it('computes stay and re-teach, counting unmarked elements as missed', async () => {
    const device = randomUUID()
    const stay = randomUUID()
    await mergePush(w.client, w.organisationId, device, { lessons: [], checks: [check(stay, 5000, { finishedAt: 5000 })], events: marks(stay, device, { ...allUnaided, [stepIds[2]!]: 'cued' }) })
    expect((await checkRows(w.client, [stay])).checks[0]).toMatchObject({ outcome: 'stay', next_interval_index: 2 })
    const safety = randomUUID()
    await mergePush(w.client, w.organisationId, device, { lessons: [], checks: [check(safety, 5000, { finishedAt: 5000 })], events: marks(safety, device, { ...allUnaided, [kpIds[0]!]: 'missed' }) })
    expect((await checkRows(w.client, [safety])).checks[0]).toMatchObject({ outcome: 'reteach', next_interval_index: 0 })
    const unmarked = randomUUID()
    const some = Object.fromEntries(elements.slice(0, 3).map(e => [e, 'unaided']))
    await mergePush(w.client, w.organisationId, device, { lessons: [], checks: [check(unmarked, 5000, { finishedAt: 5000 })], events: marks(unmarked, device, some) })
    expect((await checkRows(w.client, [unmarked])).checks[0]).toMatchObject({ outcome: 'reteach' })
  })

  it('marks sent after the finish are kept but do not change the outcome; an open copy cannot reopen it', async () => {
    const id = randomUUID()
    const device = randomUUID()
    await mergePush(w.client, w.organisationId, device, { lessons: [], checks: [check(id, 5000, { finishedAt: 5000 })], events: marks(id, device, allUnaided) })
    const late = marks(id, device, { [kpIds[0]!]: 'missed' }, 9000).map(e => ({ ...e, seq: 50 }))
    const reopened = await mergePush(w.client, w.organisationId, device, { lessons: [], checks: [check(id, 9000, { note: 'changed later' })], events: late })
    expect(reopened.rejected).toEqual([{ id, reason: 'This spot check was finished; it can no longer be changed.' }])
    const rows = await checkRows(w.client, [id])
    expect(rows.checks[0]).toMatchObject({ outcome: 'clean', note: '', finished_at: 5000 })
    expect(rows.events).toHaveLength(elements.length + 1)
  })

  it('rejects a mark id seen before with other content, and keeps the stored one', async () => {
    const id = randomUUID()
    const device = randomUUID()
    const [m] = marks(id, device, { [stepIds[0]!]: 'unaided' })
    await mergePush(w.client, w.organisationId, device, { lessons: [], checks: [check(id, 3000)], events: [m] })
    const forged = await mergePush(w.client, w.organisationId, device, { lessons: [], checks: [], events: [{ ...m!, value: 'missed' }] })
    expect(forged.rejected).toEqual([{ id: m!.id, reason: expect.stringMatching(/different mark with this id is already stored/) }])
    expect((await checkRows(w.client, [id])).events.map((e: { value: string }) => e.value)).toEqual(['unaided'])
  })

  it('refuses other organisations\' ids, unknown elements, mixed marks and orphan marks, with reasons', async () => {
    const other = await makeWorld(content)
    const device = randomUUID()
    const cases: Array<[unknown, RegExp]> = [
      [check(randomUUID(), 1, { learnerId: other.learnerId }), /learner is not in this organisation's roster/],
      [check(randomUUID(), 1, { jobId: other.jobId, versionId: other.versionId }), /job is not one of this organisation's jobs/],
      [check(randomUUID(), 1, { versionId: other.versionId }), /version does not belong to this job/],
      [check(randomUUID(), 1, { coachUserId: other.coachUserId }), /coach is not a coach or admin/],
      [check(randomUUID(), 1, { elements: [randomUUID()] }), /not in this breakdown version/],
      [check(randomUUID(), 1, { elements: [`${stepIds[0]!}:reason`] }), /not in this breakdown version/],
      [check(randomUUID(), 1, { lessonId: randomUUID() }), /lesson this check follows is not on the server/],
      [check(randomUUID(), 1, { elements: [] }), /at least one element/],
      [check(randomUUID(), 1, { intervalIndex: 7 }), /intervalIndex/],
    ]
    const res = await mergePush(w.client, w.organisationId, device, { lessons: [], checks: cases.map(c => c[0]), events: [] })
    expect(res.accepted).toEqual([])
    expect(res.rejected).toHaveLength(cases.length)
    for (const [i, [, reason]] of cases.entries()) expect(res.rejected.find(r => r.id === (cases[i]![0] as { id: string }).id)?.reason).toMatch(reason)

    // The other organisation's own check: its id cannot be taken over, its marks cannot be added to.
    const theirs = randomUUID()
    const theirDevice = randomUUID()
    await mergePush(other.client, other.organisationId, theirDevice, { lessons: [], checks: [{ ...check(theirs, 1), coachUserId: other.coachUserId, learnerId: other.learnerId, jobId: other.jobId, versionId: other.versionId }], events: [] })
    const sneaky = await mergePush(w.client, w.organisationId, device, { lessons: [], checks: [], events: [...marks(theirs, device, { [stepIds[0]!]: 'missed' }), { ...marks(randomUUID(), device, { [stepIds[0]!]: 'missed' })[0]!, lessonId: randomUUID() }] })
    expect(sneaky.rejected.map(r => r.reason)).toEqual([
      'A mark names either a lesson or a spot check, not both.',
      'The spot check of this mark is not on the server yet; send the check with it.',
    ])
    expect((await checkRows(other.client, [theirs])).events).toEqual([])
  })

  it('refuses a check following a lesson of another learner or job, and takes one following its own lesson', async () => {
    const device = randomUUID()
    const lessonId = randomUUID()
    const lesson = { id: lessonId, coachUserId: w.coachUserId, learnerId: w.learnerId, jobId: w.jobId, versionId: w.versionId, startedAt: 1, updatedAt: 2, decision: 'ready', signedOffAt: 2 }
    const good = randomUUID()
    const res = await mergePush(w.client, w.organisationId, device, { lessons: [lesson], checks: [check(good, 3, { lessonId })], events: [] })
    expect(res.rejected).toEqual([])
    expect((await checkRows(w.client, [good])).checks[0].lesson_id).toBe(lessonId)
    const changed = await mergePush(w.client, w.organisationId, device, { lessons: [], checks: [check(good, 4, { lessonId: null })], events: [] })
    expect(changed.rejected[0]!.reason).toMatch(/cannot change after it starts/)
  })

  // Hostile check payloads (1,000): nothing but the seeded check's own rows may ever be stored.
  it('never throws on 1,000 hostile check pushes, and what it refuses changes nothing', async () => {
    const device = randomUUID()
    const id = randomUUID()
    const seeded = marks(id, device, allUnaided)
    await mergePush(w.client, w.organisationId, device, { lessons: [], checks: [check(id, 5000, { finishedAt: 5000 })], events: seeded })
    const snapshot = async () => (await w.client.execute('select (select count(*) from spot_checks) c, (select count(*) from check_events) e, (select group_concat(outcome || note || elements) from spot_checks) o')).rows[0]
    const before = await snapshot()
    const junk = fc.oneof(fc.anything(), fc.string({ maxLength: 2000 }), fc.constant(null), fc.integer(), fc.constant({ id: 'not-a-uuid', checkId: 7 }))
    const hostileCheck = fc.oneof(
      junk,
      fc.constant(check(id, 99_999, { note: 'overwrite' })),
      fc.constant(check(id, 99_999, { finishedAt: null })),
      fc.constant(check(id, 99_999, { learnerId: randomUUID(), finishedAt: 99_999 })),
      fc.record({ elements: fc.array(fc.string({ maxLength: 60 }), { maxLength: 600 }) }).map(x => check(randomUUID(), 1, x)),
      fc.constant(check(randomUUID(), 1, { note: 'x'.repeat(10_000) })),
      fc.constant(check(randomUUID(), 1, { versionId: randomUUID() })),
    )
    const hostileMark = fc.oneof(
      junk,
      fc.record({ i: fc.nat(seeded.length - 1), value: fc.constantFrom('missed', 'cued', 'x') }).map(({ i, value }) => ({ ...seeded[i]!, value })),
      fc.constant({ ...seeded[0]!, id: randomUUID(), deviceId: randomUUID() }),
      fc.constant({ ...seeded[0]!, id: randomUUID(), checkId: randomUUID() }),
      fc.constant({ ...seeded[0]!, id: randomUUID(), kind: 'undo', value: 'not-an-id' }),
      fc.constant({ ...seeded[0]!, id: randomUUID(), lessonId: randomUUID() }),
      fc.constant({ ...seeded[0]!, id: randomUUID(), elementId: 'x'.repeat(5000) }),
    )
    await fc.assert(fc.asyncProperty(fc.array(hostileCheck, { maxLength: 3 }), fc.array(hostileMark, { maxLength: 5 }), async (checks, events) => {
      const res = await mergePush(w.client, w.organisationId, device, { lessons: [], checks, events })
      // Only re-sent copies of the seeded check's own marks may be accepted.
      return res.accepted.every(a => seeded.some(e => e.id === a))
    }), { numRuns: 1000 })
    expect(await snapshot()).toEqual(before)
  }, 120_000)
})

describe('refresher lessons (focus)', () => {
  it('stores focus and scores the lesson on the focused elements only', async () => {
    const device = randomUUID()
    const lessonId = randomUUID()
    const focus = [stepIds[2]!]
    // T1 of a refresher on step 3 only: one unaided mark is 100 %, where the whole job would be 33 %.
    const events = [{ id: randomUUID(), lessonId, pass: 'T1-1', elementId: stepIds[2]!, kind: 'mark', value: 'unaided', clientTime: 10, deviceId: device, seq: 1 }]
    const lesson = { id: lessonId, coachUserId: w.coachUserId, learnerId: w.learnerId, jobId: w.jobId, versionId: w.versionId, startedAt: 1, updatedAt: 20, focus }
    const res = await mergePush(w.client, w.organisationId, device, { lessons: [lesson], events, checks: [] })
    expect(res.rejected).toEqual([])
    expect(res.scores[lessonId]!.t1).toBe(100)
    const whole = randomUUID()
    const res2 = await mergePush(w.client, w.organisationId, device, { lessons: [{ ...lesson, id: whole, focus: null }], events: [{ ...events[0]!, id: randomUUID(), lessonId: whole, seq: 2 }], checks: [] })
    expect(res2.scores[whole]!.t1).toBe(33.3)
    const stored = (await w.client.execute({ sql: 'select focus from lessons where id = ?', args: [lessonId] })).rows[0]!
    expect(JSON.parse(String(stored.focus))).toEqual(focus)
    expect((await lessonRows(w.client, [lessonId])).lessons).toHaveLength(1)
    const empty = await mergePush(w.client, w.organisationId, device, { lessons: [{ ...lesson, id: randomUUID(), focus: [] }], events: [], checks: [] })
    expect(empty.rejected[0]!.reason).toMatch(/at least one element/)
  })
})
