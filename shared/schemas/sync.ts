// The shapes of POST /api/sync (DESIGN.md §7). The envelope is checked as a whole; each lesson
// and event is checked on its own, so one bad item is rejected with its reason and the rest go in.
import { z } from 'zod'
import { EVENT_KINDS, PASS_KEY } from '../utils/lesson-events'
import { SYNC_LIMITS } from '../utils/sync-limits'
import { MAX_CHECK_ELEMENTS, REASON_SUFFIX } from '../utils/check-elements'
import { CHECK_EVENT_KINDS } from '../utils/check-state'
import { MARK_VALUES } from '../utils/scoring'
import { SPOT_CHECK_INTERVAL_DAYS } from '../utils/spot-check-schedule'

export const syncEnvelopeSchema = z.object({
  deviceId: z.uuid('deviceId must be the tablet\'s UUID.'),
  lessons: z.array(z.unknown()).max(SYNC_LIMITS.lessons, `Send at most ${SYNC_LIMITS.lessons} lessons per push.`).default([]),
  checks: z.array(z.unknown()).max(SYNC_LIMITS.checks, `Send at most ${SYNC_LIMITS.checks} checks per push.`).default([]),
  events: z.array(z.unknown()).max(SYNC_LIMITS.events, `Send at most ${SYNC_LIMITS.events} events per push.`).default([]),
})

const time = z.number().int().min(0).max(8_640_000_000_000_000)
const shortText = (max: number) => z.string().max(max)

export const syncLessonSchema = z.object({
  id: z.uuid(),
  coachUserId: z.uuid(),
  learnerId: z.uuid(),
  jobId: z.uuid(),
  versionId: z.uuid(),
  place: shortText(120).default(''),
  startedAt: time,
  updatedAt: time,
  prepare: z.record(shortText(80), z.object({ done: z.boolean(), note: shortText(500) })).refine(r => Object.keys(r).length <= 50, 'At most 50 preparation items.').default({}),
  helper: shortText(200).default(''),
  decision: z.enum(['ready', 'another-pass']).nullable().default(null),
  acknowledgement: z.object({
    name: shortText(120),
    // A signature is a small PNG data URL from the signature pad.
    signature: z.string().max(200_000).regex(/^data:image\/png;base64,[A-Za-z0-9+/=]+$/, 'A signature must be a PNG data URL.').nullable(),
    at: time,
  }).nullable().default(null),
  signedOffAt: time.nullable().default(null),
  stageSeconds: z.partialRecord(z.enum(['prepare', 'present', 'tryout', 'followup']), z.number().min(0).max(86_400 * 7)).default({}),
  // A refresher (issue 6): the changed step and key point ids it teaches; null is the whole job.
  focus: z.array(z.uuid('focus lists step and key point ids.')).min(1, 'A refresher teaches at least one element; send null for the whole job.').max(MAX_CHECK_ELEMENTS, `A refresher names at most ${MAX_CHECK_ELEMENTS} elements.`).nullable().default(null),
})

/** A step id, a key point id, or a key point id with ":reason" (shared/utils/check-elements.ts). */
const checkElementId = z.string().regex(new RegExp(`^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}(${REASON_SUFFIX})?$`, 'i'), 'An element is a step or key point id, or a key point id with ":reason".')

// A spot check as the tablet sends it; outcome and next date are computed on the server.
export const syncCheckSchema = z.object({
  id: z.uuid(),
  coachUserId: z.uuid(),
  learnerId: z.uuid(),
  jobId: z.uuid(),
  versionId: z.uuid(),
  lessonId: z.uuid().nullable().default(null),
  startedAt: time,
  updatedAt: time,
  elements: z.array(checkElementId).min(1, 'A spot check checks at least one element.').max(MAX_CHECK_ELEMENTS, `A spot check names at most ${MAX_CHECK_ELEMENTS} elements.`)
    .refine(list => new Set(list).size === list.length, 'An element is named twice in this check.'),
  note: shortText(2000).default(''),
  finishedAt: time.nullable().default(null),
  intervalIndex: z.number().int().min(0).max(SPOT_CHECK_INTERVAL_DAYS.length - 1),
})

// A mark (or undo) of a spot check: an event that names checkId instead of lessonId, and no pass.
export const syncCheckEventSchema = z.object({
  id: z.uuid(),
  checkId: z.uuid(),
  elementId: checkElementId.nullable(),
  kind: z.enum(CHECK_EVENT_KINDS),
  value: shortText(64).nullable(),
  clientTime: time,
  deviceId: z.uuid(),
  seq: z.number().int().min(1).max(Number.MAX_SAFE_INTEGER),
}).superRefine((e, ctx) => {
  if (e.kind === 'mark' && (!e.elementId || !(MARK_VALUES as readonly string[]).includes(e.value ?? ''))) ctx.addIssue({ code: 'custom', message: 'A mark needs the element and one of unaided, cued or missed.', path: ['value'] })
  if (e.kind === 'undo' && (e.elementId !== null || !z.uuid().safeParse(e.value).success)) ctx.addIssue({ code: 'custom', message: 'An undo names the id of the mark it takes back, and no element.', path: ['value'] })
})

export const syncEventSchema = z.object({
  id: z.uuid(),
  lessonId: z.uuid(),
  pass: z.string().regex(PASS_KEY, 'pass must look like T2-1 or P1-1.'),
  elementId: z.uuid().nullable(),
  kind: z.enum(EVENT_KINDS),
  value: shortText(64).nullable(),
  clientTime: time,
  deviceId: z.uuid(),
  seq: z.number().int().min(1).max(Number.MAX_SAFE_INTEGER),
})

export type SyncLesson = z.output<typeof syncLessonSchema>
export type SyncEvent = z.output<typeof syncEventSchema>
export type SyncCheck = z.output<typeof syncCheckSchema>
export type SyncCheckEvent = z.output<typeof syncCheckEventSchema>

export const syncPullQuerySchema = z.object({
  since: z.coerce.number({ error: 'since must be a cursor number (0 for everything).' }).int().min(0),
})
