// What one tablet records for the sync benchmark: a published breakdown's content and pushes of
// realistic lessons and events, the same kind on every run (a fixed seed).
import { randomBytes, randomUUID } from 'node:crypto'

export const LESSONS_PER_PUSH = 5
export const CONTINUED_LESSONS = 2 // of each push's lessons, carried on in the next push

// Invented content (our demo bakery); 6 steps, 12 key points, 10 of them with a reason.

export function breakdownContent() {
  const kp = (kind, text, reason = '') => ({ id: randomUUID(), kind, text, reason, photoId: null })
  const step = (text, keyPoints) => ({ id: randomUUID(), text, photoId: null, keyPoints })
  return {
    units: [{
      id: randomUUID(),
      title: '',
      steps: [
        step('Switch off and lock out the divider', [kp('safety', 'Own padlock on the isolator', 'Nobody can start the drive'), kp('safety', 'Try the start button', 'Proves the lock holds')]),
        step('Empty the hopper', [kp('quality', 'Scrape towards the chute', 'Old dough spoils the next batch'), kp('knack', 'Tilt the scraper flat', '')]),
        step('Take off the knife guard', [kp('safety', 'Cut-resistant gloves on', 'The knife edge is exposed'), kp('knack', 'Lift the left latch first', 'The right one jams otherwise')]),
        step('Clean the pockets', [kp('quality', 'Brush every pocket out', 'A dirty pocket weighs wrong'), kp('quality', 'Oil only with food-grade oil', 'Other oil taints the dough')]),
        step('Refit the guard', [kp('safety', 'Hear both latches click', 'A loose guard stops the machine'), kp('knack', 'Press the middle of the guard', '')]),
        step('Check-weigh the first pieces', [kp('quality', 'Weigh five pieces', 'One piece says little'), kp('quality', 'Adjust by a quarter turn', 'Bigger turns overshoot')]),
      ],
    }],
  }
}

const SIGNATURE = `data:image/png;base64,${randomBytes(4500).toString('base64')}`

/**
 * One tablet's records: lessons of one learner at a time, each a presentation (P1–P3) and then
 * rounds of try-outs T1–T4, with marks mostly unaided, some cued, a few missed, a recited step
 * order, and now and then an undone mark that is marked again. Times and seq run on across
 * lessons, as on one device.
 */
export function makeTablet(ids, content, seed) {
  let random = seed
  const rand = () => {
    // xorshift32, so every run records the same kind of lessons.
    random ^= random << 13
    random ^= random >>> 17
    random ^= random << 5
    return (random >>> 0) / 4294967296
  }
  const deviceId = randomUUID()
  const steps = content.units.flatMap(u => u.steps)
  const keyPoints = steps.flatMap(s => s.keyPoints)
  const reasons = keyPoints.filter(k => k.reason)
  let seq = 0
  let clock = Date.UTC(2026, 2, 2, 6, 0, 0)
  const markValue = () => {
    const r = rand()
    return r < 0.7 ? 'unaided' : r < 0.9 ? 'cued' : 'missed'
  }

  function startLesson(learnerId) {
    return { id: randomUUID(), learnerId, startedAt: clock, rounds: 0, presented: false, place: `Divider ${1 + Math.floor(rand() * 3)}`, stageSeconds: {} }
  }

  /** About `count` events of one lesson (stopping at the end of a pass). */
  function record(lesson, count) {
    const out = []
    const ev = (pass, kind, elementId, value) => {
      seq += 1
      clock += 2000 + Math.floor(rand() * 13_000)
      const e = { id: randomUUID(), lessonId: lesson.id, pass, elementId, kind, value, clientTime: clock, deviceId, seq }
      out.push(e)
      return e
    }
    const pass = (key, body) => {
      ev(key, 'pass-open', null, null)
      body(key)
      ev(key, 'pass-close', null, null)
    }
    const marks = (key, elements) => {
      for (const el of elements) {
        const mark = ev(key, 'mark', el.id, markValue())
        if (rand() < 0.05) {
          ev(key, 'undo', el.id, mark.id)
          ev(key, 'mark', el.id, markValue())
        }
      }
    }
    if (!lesson.presented) {
      for (const p of ['P1-1', 'P2-1', 'P3-1']) pass(p, key => steps.forEach(s => ev(key, 'present', s.id, null)))
      lesson.presented = true
    }
    while (out.length < count) {
      const n = ++lesson.rounds
      pass(`T1-${n}`, key => marks(key, steps))
      pass(`T2-${n}`, (key) => {
        if (rand() < 0.3) ev(key, 'order-all', null, null)
        else {
          const order = steps.map(s => s.id)
          if (rand() < 0.4) {
            const i = Math.floor(rand() * (order.length - 1))
            ;[order[i], order[i + 1]] = [order[i + 1], order[i]]
          }
          for (const id of order) ev(key, 'order', id, null)
        }
        marks(key, steps)
      })
      pass(`T3-${n}`, key => marks(key, keyPoints))
      pass(`T4-${n}`, key => marks(key, reasons))
    }
    lesson.stageSeconds = { prepare: 300, present: 900, tryout: Math.round((clock - lesson.startedAt) / 1000), followup: 0 }
    return out
  }

  function lessonBody(lesson, signedOff) {
    return {
      id: lesson.id,
      coachUserId: ids.coachUserId,
      learnerId: lesson.learnerId,
      jobId: ids.jobId,
      versionId: ids.versionId,
      place: lesson.place,
      startedAt: lesson.startedAt,
      updatedAt: clock,
      prepare: { 'breakdown-sheet': { done: true, note: '' }, 'divider-cleaned': { done: true, note: 'Cleaned at 05:50' }, 'ppe': { done: true, note: '' } },
      helper: rand() < 0.5 ? 'Pieter from the day shift' : '',
      decision: signedOff ? (rand() < 0.6 ? 'ready' : 'another-pass') : null,
      acknowledgement: signedOff ? { name: 'Learner', signature: SIGNATURE, at: clock } : null,
      signedOffAt: signedOff ? clock : null,
      stageSeconds: lesson.stageSeconds,
    }
  }

  /**
   * A tablet that keeps recording: each next(events) is the next push of exactly `events` events
   * in LESSONS_PER_PUSH lessons; CONTINUED_LESSONS of each push's lessons go on in the next push,
   * the others are signed off in theirs (all of them with `{ last: true }`).
   */
  function pushSource(learnerIds) {
    let carried = []
    let nextLearner = 0
    return function next(events, { last = false } = {}) {
      const lessons = [...carried]
      while (lessons.length < LESSONS_PER_PUSH) lessons.push(startLesson(learnerIds[nextLearner++ % learnerIds.length]))
      const share = Math.floor(events / lessons.length)
      const bodyEvents = []
      const bodyLessons = []
      lessons.forEach((lesson, i) => {
        const want = i === lessons.length - 1 ? events - bodyEvents.length : share
        // Whole passes, trimmed to the share, so the push has exactly `events` events.
        bodyEvents.push(...record(lesson, want).slice(0, want))
      })
      carried = last ? [] : lessons.slice(-CONTINUED_LESSONS)
      for (const lesson of lessons) bodyLessons.push(lessonBody(lesson, !carried.includes(lesson)))
      const body = { deviceId, lessons: bodyLessons, events: bodyEvents, checks: [] }
      return { body, json: JSON.stringify(body) }
    }
  }

  /** `count` pushes of a pushSource, the last one signing off every lesson. */
  function pushes(count, events, learnerIds) {
    const next = pushSource(learnerIds)
    return Array.from({ length: count }, (_, p) => next(events, { last: p === count - 1 }))
  }

  return { deviceId, pushes, pushSource }
}
