// The shapes of POST /api/sync (DESIGN.md §7). The envelope is checked as a whole; each lesson
// and event is checked on its own, so one bad item is rejected with its reason and the rest go in.
import { z } from 'zod'
import { EVENT_KINDS, PASS_KEY } from '../utils/lesson-events'
import { SYNC_LIMITS } from '../utils/sync-limits'

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

export const syncPullQuerySchema = z.object({
  since: z.coerce.number({ error: 'since must be a cursor number (0 for everything).' }).int().min(0),
})
