// The sync merge in process against real SQLite files (no HTTP): idempotence, conflicts and
// order independence. The HTTP route is covered in tests/e2e/sync.test.ts.
import { randomUUID } from 'node:crypto'
import { beforeAll, describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { mergePush } from '../../server/utils/sync-merge'
import { checkRows, lessonRows, makeWorld, type World } from '../support/merge-world'
import { kp, single, step } from '../fixtures/breakdowns'

const content = single([
  step('Stop and lock out slicer', [kp('safety', 'Own padlock on the isolator', 'Nobody can start it')]),
  step('Open the blade guard', [kp('knack', 'Lift both latches together', 'One latch jams it')]),
  step('Fit the new blade set', [kp('quality', 'Seat both pins', 'Half-seated blades tear loaves')]),
])
const stepIds = content.units[0]!.steps.map(s => s.id)
const kpIds = content.units[0]!.steps.flatMap(s => s.keyPoints.map(k => k.id))

let a: World
let b: World
beforeAll(async () => {
  a = await makeWorld(content)
  b = await makeWorld(content, a)
})

function checkFor(w: World, id: string, lessonId: string | null, updatedAt: number, extra: Record<string, unknown> = {}) {
  return { id, coachUserId: w.coachUserId, learnerId: w.learnerId, jobId: w.jobId, versionId: w.versionId, lessonId, startedAt: 1000, updatedAt, elements: [stepIds[0], kpIds[0]], note: '', finishedAt: null, intervalIndex: 0, ...extra }
}

function lessonFor(w: World, id: string, deviceId: string, updatedAt: number, extra: Record<string, unknown> = {}) {
  return { id, coachUserId: w.coachUserId, learnerId: w.learnerId, jobId: w.jobId, versionId: w.versionId, place: 'Slicer 2', startedAt: 1000, updatedAt, helper: `helper from ${deviceId.slice(0, 4)}`, ...extra }
}

describe('sync merge', () => {
  it('is idempotent: the same push twice changes nothing the second time', async () => {
    const lessonId = randomUUID()
    const device = randomUUID()
    const events = stepIds.map((s, i) => ({ id: randomUUID(), lessonId, pass: 'T1-1', elementId: s, kind: 'mark', value: 'unaided', clientTime: 2000 + i, deviceId: device, seq: i + 1 }))
    const push = { lessons: [lessonFor(a, lessonId, device, 3000)], events, checks: [] }
    const first = await mergePush(a.client, a.organisationId, device, push)
    expect(first.rejected).toEqual([])
    expect(first.written).toEqual({ lessons: 1, events: 3, checks: 0, checkEvents: 0 })
    expect(first.scores[lessonId]!.t1).toBe(100)
    const before = await lessonRows(a.client, [lessonId])
    const second = await mergePush(a.client, a.organisationId, device, push)
    expect(second.written).toEqual({ lessons: 0, events: 0, checks: 0, checkEvents: 0 })
    expect(second.accepted.sort()).toEqual(first.accepted.sort())
    expect(await lessonRows(a.client, [lessonId])).toEqual(before)
  })

  it('rejects an event id seen before with other content, and keeps the stored one', async () => {
    const lessonId = randomUUID()
    const device = randomUUID()
    const e = { id: randomUUID(), lessonId, pass: 'T3-1', elementId: kpIds[0], kind: 'mark', value: 'unaided', clientTime: 2000, deviceId: device, seq: 1 }
    await mergePush(a.client, a.organisationId, device, { lessons: [lessonFor(a, lessonId, device, 3000)], events: [e], checks: [] })
    const forged = await mergePush(a.client, a.organisationId, device, { lessons: [], events: [{ ...e, value: 'missed' }], checks: [] })
    expect(forged.accepted).toEqual([])
    expect(forged.rejected).toEqual([{ id: e.id, reason: expect.stringMatching(/different mark with this id is already stored/) }])
    const rows = await lessonRows(a.client, [lessonId])
    expect(rows.events.map((r: { value: string }) => r.value)).toEqual(['unaided'])
  })

  it('rejects lessons naming another organisation\'s learner, job or version, and marks of unknown lessons', async () => {
    const device = randomUUID()
    const other = await makeWorld(content)
    const foreign = await mergePush(a.client, a.organisationId, device, { lessons: [lessonFor(other, randomUUID(), device, 1)], events: [], checks: [] })
    expect(foreign.rejected[0]!.reason).toMatch(/not in this organisation's roster/)
    const orphan = await mergePush(a.client, a.organisationId, device, { lessons: [], events: [{ id: randomUUID(), lessonId: randomUUID(), pass: 'T1-1', elementId: stepIds[0], kind: 'mark', value: 'cued', clientTime: 1, deviceId: device, seq: 1 }], checks: [] })
    expect(orphan.rejected[0]!.reason).toMatch(/not on the server yet/)
  })

  it('merges lesson fields last-writer-wins, signed-off first, whatever the order', async () => {
    const lessonId = randomUUID()
    const [d1, d2] = [randomUUID(), randomUUID()].sort()
    const early = lessonFor(a, lessonId, d1!, 5000, { helper: 'Ask Bram' })
    const signed = lessonFor(a, lessonId, d1!, 6000, { helper: 'Ask Bram', decision: 'ready', signedOffAt: 6000 })
    const lateUnsigned = lessonFor(a, lessonId, d2!, 9000, { helper: 'Ask Odile' })
    await mergePush(a.client, a.organisationId, d2!, { lessons: [lateUnsigned], events: [], checks: [] })
    await mergePush(a.client, a.organisationId, d1!, { lessons: [signed], events: [], checks: [] })
    const afterSign = await mergePush(a.client, a.organisationId, d1!, { lessons: [early], events: [], checks: [] })
    expect(afterSign.rejected).toEqual([])
    const ack = { name: 'Saoirse', signature: null, at: 7000 }
    await mergePush(a.client, a.organisationId, d2!, { lessons: [{ ...lateUnsigned, acknowledgement: ack }], events: [], checks: [] })
    const row = (await lessonRows(a.client, [lessonId])).lessons[0]
    expect(row).toMatchObject({ helper: 'Ask Bram', decision: 'ready', signed_off_at: 6000 })
    expect(JSON.parse(row.acknowledgement)).toEqual(ack)
  })

  // Several tablets; their pushes duplicated, reordered, delayed and split. The end state must equal
  // applying the union of everything once. (fast-check, 1,000 runs, as issue 5 asks.) Each tablet
  // also runs a spot check of the same learner and job (one shared check id, so copies compete),
  // whose marks travel in the same pushes: the checks, their marks and their outcomes must agree too.
  it('ends in the same rows, scores and check outcomes as the union applied once, for any delivery (1,000 runs)', async () => {
    const markArb = fc.record({ element: fc.nat(5), pass: fc.constantFrom('T1-1', 'T2-1', 'T3-1', 'T4-1', 'T3-2'), value: fc.constantFrom('unaided', 'cued', 'missed'), kind: fc.constantFrom('mark', 'mark', 'mark', 'order', 'undo') })
    const checkMarkArb = fc.record({ element: fc.nat(3), value: fc.constantFrom('unaided', 'unaided', 'cued', 'missed'), undo: fc.boolean(), late: fc.boolean() })
    const checkEditArb = fc.record({ at: fc.integer({ min: 1, max: 50 }), note: fc.constantFrom('', 'Blade changed fine', 'Needed a nudge'), finish: fc.boolean(), drop: fc.boolean(), step: fc.nat(6) })
    const tabletArb = fc.record({ marks: fc.array(markArb, { minLength: 1, maxLength: 8 }), cuts: fc.array(fc.nat(8), { maxLength: 3 }), edits: fc.array(fc.record({ at: fc.integer({ min: 1, max: 50 }), helper: fc.constantFrom('A', 'B', 'C'), sign: fc.boolean() }), { minLength: 1, maxLength: 3 }), checkMarks: fc.array(checkMarkArb, { maxLength: 6 }), checkEdits: fc.array(checkEditArb, { minLength: 1, maxLength: 3 }) })
    const checkElements = [stepIds[0]!, kpIds[0]!, `${kpIds[0]!}:reason`, kpIds[2]!]
    await fc.assert(fc.asyncProperty(
      fc.array(tabletArb, { minLength: 1, maxLength: 3 }),
      fc.array(fc.nat(), { maxLength: 12 }),
      fc.array(fc.nat(), { maxLength: 4 }),
      async (tablets, order, duplicates) => {
        const lessonId = randomUUID()
        const checkId = randomUUID()
        const perTablet = tablets.map((t) => {
          const device = randomUUID()
          const events: Array<Record<string, unknown>> = []
          t.marks.forEach((m, i) => {
            const target = m.kind === 'undo' && events.length ? events[m.element % events.length]!.id as string : null
            const elementId = m.pass.startsWith('T3') || m.pass.startsWith('T4') ? kpIds[m.element % kpIds.length] : stepIds[m.element % stepIds.length]
            events.push({ id: randomUUID(), lessonId, pass: m.pass, elementId: m.kind === 'undo' ? null : elementId, kind: m.kind === 'undo' && !target ? 'mark' : m.kind, value: m.kind === 'undo' && target ? target : m.kind === 'order' ? null : m.value, clientTime: 10_000 + i * 10 + tablets.indexOf(t), deviceId: device, seq: i + 1 })
          })
          const snapshots = t.edits.map(e => lessonFor(a, lessonId, device, 20_000 + e.at, { helper: e.helper, signedOffAt: e.sign ? 20_000 + e.at : null }))
          // The spot check: marks (some undone, some after the finish) and snapshots of its fields.
          const checkEvents: Array<Record<string, unknown>> = []
          t.checkMarks.forEach((m, i) => {
            const time = 30_000 + (m.late ? 100 : 0) + i * 2 + tablets.indexOf(t)
            const mark = { id: randomUUID(), checkId, elementId: checkElements[m.element % checkElements.length], kind: 'mark', value: m.value, clientTime: time, deviceId: device, seq: 100 + i * 2 }
            checkEvents.push(mark)
            if (m.undo) checkEvents.push({ id: randomUUID(), checkId, elementId: null, kind: 'undo', value: mark.id, clientTime: time + 1, deviceId: device, seq: 101 + i * 2 })
          })
          const checkSnapshots = t.checkEdits.map(e => checkFor(a, checkId, lessonId, 30_050 + e.at, { note: e.note, finishedAt: e.finish ? 30_050 + e.at : null, intervalIndex: e.step, elements: e.drop ? checkElements.slice(1) : checkElements }))
          const allEvents = [...events, ...checkEvents]
          // Split into pushes at the cut points; every push carries the tablet's lesson and check as they were then.
          const cuts = [...new Set(t.cuts.map(c => c % (allEvents.length + 1)))].sort((x, y) => x - y)
          const bounds = [0, ...cuts, allEvents.length]
          const pushes = bounds.slice(1).map((end, i) => ({ device, lessons: [snapshots[Math.min(i, snapshots.length - 1)]!], events: allEvents.slice(bounds[i], end), checks: [checkSnapshots[Math.min(i, checkSnapshots.length - 1)]!] }))
          pushes[pushes.length - 1]!.lessons = snapshots
          pushes[pushes.length - 1]!.checks = checkSnapshots
          return { device, events: allEvents, snapshots, checkSnapshots, pushes }
        })
        let deliveries = perTablet.flatMap(t => t.pushes)
        for (const d of duplicates) deliveries.push(deliveries[d % deliveries.length]!)
        // Reorder: pick pushes in the order given (delayed ones come later).
        const shuffled: typeof deliveries = []
        for (const o of order) if (deliveries.length) shuffled.push(deliveries.splice(o % deliveries.length, 1)[0]!)
        deliveries = [...shuffled, ...deliveries]
        for (const p of deliveries) await mergePush(a.client, a.organisationId, p.device, p)

        for (const t of perTablet) await mergePush(b.client, b.organisationId, t.device, { lessons: t.snapshots, events: t.events, checks: t.checkSnapshots })
        const got = await lessonRows(a.client, [lessonId])
        const want = await lessonRows(b.client, [lessonId])
        expect(got).toEqual(want)
        const gotChecks = await checkRows(a.client, [checkId])
        expect(gotChecks).toEqual(await checkRows(b.client, [checkId]))
        // Every mark was taken, and a finished check has its outcome.
        expect(gotChecks.checks).toHaveLength(1)
        expect(gotChecks.events).toHaveLength(perTablet.reduce((n, t) => n + t.events.filter(e => 'checkId' in e).length, 0))
        expect(gotChecks.checks[0].outcome === null).toBe(gotChecks.checks[0].finished_at === null)
      },
    ), { numRuns: 1000 })
  }, 600_000)
})
