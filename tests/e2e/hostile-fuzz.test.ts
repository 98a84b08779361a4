// Every write route (POST/PUT/PATCH/DELETE under server/api/) fuzzed with bodies generated from its
// zod schema's shape (tests/support/zod-arbitrary.ts) and with ids that are real, another
// organisation's, random or malformed, 500 runs each (issue 7, item 3). For every answer: never a
// 5xx; a refusal is one of REFUSALS with a data.message a person can read; a refused request
// changes no row (the organisation's rows, or for public routes every row, compared before and
// after through a read-only connection); and the other organisation, whose ids are sent all along
// but whose session nobody holds, has not one row changed by the whole run of a route.
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { z } from 'zod'
import { startServer, type TestServer } from '../support/server'
import { Client, uniqueAddress, type Reply } from '../support/http'
import { organisationWorld, type OrgWorld } from '../support/org-world'
import { hostile, junk, RawBody, type WalkOptions } from '../support/zod-arbitrary'
import { badRefusal } from '../support/refusals'
import { changedTables, SnapshotReader, type Snapshot } from '../support/db-snapshot'
import { routeFiles, routeKey } from '../support/route-matrix'
import { TINY_PNG } from '../support/photos'
import { changePasswordSchema, forgotSchema, loginSchema, resetSchema, signupSchema } from '../../shared/schemas/auth'
import { acceptInviteSchema, createInviteSchema } from '../../shared/schemas/invites'
import { workAreaSchema } from '../../shared/schemas/work-areas'
import { updateMemberSchema } from '../../shared/schemas/members'
import { updateOrganisationSchema } from '../../shared/schemas/organisation'
import { meSettingsSchema } from '../../shared/schemas/me'
import { createLearnerSchema, updateLearnerSchema } from '../../shared/schemas/learners'
import { createJobSchema, updateJobSchema } from '../../shared/schemas/jobs'
import { breakdownExportSchema } from '../../shared/schemas/breakdown-export'
import { publishSchema, saveDraftSchema } from '../../shared/schemas/breakdown'
import { planItemSchema } from '../../shared/schemas/plan'
import { syncCheckEventSchema, syncCheckSchema, syncEnvelopeSchema, syncEventSchema, syncLessonSchema } from '../../shared/schemas/sync'
import { SYNC_LIMITS } from '../../shared/utils/sync-limits'

const RUNS = 500
/** Organisation routes run this many sessions at once, each in its own organisation (so each can snapshot its own rows). */
const WORKERS = 4

let server: TestServer
let reader: SnapshotReader
let victim: OrgWorld
let workers: OrgWorld[]

beforeAll(async () => {
  server = await startServer()
  victim = await organisationWorld(server, 'Victim')
  workers = await Promise.all(Array.from({ length: WORKERS }, (_, i) => organisationWorld(server, `Fuzz ${i + 1}`)))
  reader = await SnapshotReader.open(server.databaseUrl)
}, 180_000)
afterAll(async () => {
  reader?.close()
  await server?.stop()
})

// ---- What is sent --------------------------------------------------------------------------

// Not '.' or '..': fetch resolves dot segments (WHATWG URL), so the request would go to another route.
const malformedId = fc.constantFrom('not-a-uuid', '0', '-1', '%00', '\u0000x', '...', ' ', 'null', '__proto__', 'x'.repeat(300), '1\' or \'1\'=\'1', '8D2F6A38-4B7E-4C55-9B0E-2F1B8C1D9E0', '8d2f6a38-4b7e-4c55-9b0e-2f1b8c1d9e00\n')
/** A path segment: one of the given ids (own or the other organisation's), a random id, or not an id at all. */
const idFrom = (...known: string[]) => fc.oneof(
  { weight: 4, arbitrary: fc.constantFrom(...known) },
  { weight: 1, arbitrary: fc.uuid({ version: 4 }) },
  { weight: 1, arbitrary: malformedId },
).map(encodeURIComponent)

const noBody = fc.option(junk, { nil: undefined, freq: 2 })

interface Ctx { own: OrgWorld, other: OrgWorld }
interface Fuzz {
  /** public: one session, every row compared; organisation: WORKERS sessions, each its own organisation's rows. */
  scope: 'public' | 'organisation'
  path?: (c: Ctx) => fc.Arbitrary<string>
  body?: (c: Ctx) => fc.Arbitrary<unknown>
  /** Statuses allowed beyond REFUSALS. */
  also?: number[]
}

const walk = (c: Ctx, extra: WalkOptions = {}): WalkOptions => ({
  ids: [...c.own.ids, ...c.other.ids],
  emails: [c.other.adminEmail, c.own.member.email],
  ...extra,
})
const revision = fc.integer({ min: 0, max: 3 })
const calendarDay = fc.oneof(fc.date({ min: new Date('1999-12-30T00:00:00Z'), max: new Date('2101-01-02T00:00:00Z'), noInvalidDate: true }).map(d => d.toISOString().slice(0, 10)), fc.constantFrom('2026-02-30', '2026-13-01', '26-01-01', null))

// The push's items checked by the schemas the merge checks them with (the envelope itself says z.unknown()).
const syncPushSchema = syncEnvelopeSchema.extend({
  lessons: z.array(syncLessonSchema).max(SYNC_LIMITS.lessons),
  checks: z.array(syncCheckSchema).max(SYNC_LIMITS.checks),
  events: z.array(z.union([syncEventSchema, syncCheckEventSchema])).max(SYNC_LIMITS.events),
})

/** Bytes that are almost a photo: a real one with bytes changed, cut short or with things appended, or random bytes. */
const almostPhoto = fc.oneof(
  fc.uint8Array({ maxLength: 3000 }),
  fc.tuple(fc.array(fc.tuple(fc.nat(TINY_PNG.length - 1), fc.integer({ min: 0, max: 255 })), { maxLength: 6 }), fc.nat(TINY_PNG.length)).map(([flips, cut]) => {
    const bytes = Buffer.from(TINY_PNG)
    for (const [at, value] of flips) bytes[at] = value
    return bytes.subarray(0, Math.max(1, cut))
  }),
  fc.uint8Array({ maxLength: 500 }).map(tail => Buffer.concat([Buffer.from([0xFF, 0xD8, 0xFF, 0xE0]), tail])),
  fc.uint8Array({ maxLength: 500 }).map(tail => Buffer.concat([TINY_PNG, tail])),
)
const uploadBody = fc.oneof(
  { weight: 6, arbitrary: fc.record({ bytes: almostPhoto, name: fc.oneof(fc.constantFrom('photo.jpg', 'x.svg', '../../etc/passwd', 'a.png\r\nContent-Type: text/html', ''), fc.string({ maxLength: 30 })), type: fc.constantFrom('image/jpeg', 'image/png', 'image/svg+xml', 'text/html', 'application/octet-stream', ''), field: fc.constantFrom('file', 'file', 'file', 'photo', '') })
    .map(({ bytes, name, type, field }) => {
      const form = new FormData()
      form.append(field, new Blob([new Uint8Array(bytes)], { type }), name)
      return form
    }) },
  { weight: 1, arbitrary: junk },
)

const FUZZ: Record<string, Fuzz> = {
  // Public routes. A valid sign-up or password costs a hash (about half a second), so those are rarer here.
  'POST /api/auth/signup': { scope: 'public', body: c => hostile(signupSchema, walk(c, { validishWeight: 0, validWeight: 1 })) },
  'POST /api/auth/login': { scope: 'public', body: c => hostile(loginSchema, walk(c)) },
  'POST /api/auth/forgot': { scope: 'public', body: c => hostile(forgotSchema, walk(c)) },
  'POST /api/auth/reset': { scope: 'public', body: c => hostile(resetSchema, walk(c)) },
  'POST /api/invites/accept': { scope: 'public', body: c => hostile(acceptInviteSchema, walk(c)) },
  'POST /api/auth/logout': { scope: 'public', body: () => noBody },
  // Organisation routes, as the organisation's admin (every write role).
  'PATCH /api/me/settings': { scope: 'organisation', body: c => hostile(meSettingsSchema, walk(c)) },
  'POST /api/auth/password': { scope: 'organisation', body: c => hostile(changePasswordSchema, walk(c, { validishWeight: 0, validWeight: 1, junkWeight: 2 })) },
  'PATCH /api/organisation': { scope: 'organisation', body: c => hostile(updateOrganisationSchema, walk(c)) },
  'POST /api/work-areas': { scope: 'organisation', body: c => hostile(workAreaSchema, walk(c)) },
  'PATCH /api/work-areas/[id]': { scope: 'organisation', path: c => idFrom(c.own.workAreaId, c.other.workAreaId).map(id => `/api/work-areas/${id}`), body: c => hostile(workAreaSchema, walk(c)) },
  'POST /api/invites': { scope: 'organisation', body: c => hostile(createInviteSchema, walk(c)) },
  'PATCH /api/members/[id]': { scope: 'organisation', path: c => idFrom(c.own.member.membershipId, c.other.adminMembershipId, c.other.member.membershipId).map(id => `/api/members/${id}`), body: c => hostile(updateMemberSchema, walk(c)) },
  'POST /api/learners': { scope: 'organisation', body: c => hostile(createLearnerSchema, walk(c)) },
  'PATCH /api/learners/[id]': { scope: 'organisation', path: c => idFrom(c.own.learnerId, c.other.learnerId).map(id => `/api/learners/${id}`), body: c => hostile(updateLearnerSchema, walk(c)) },
  'POST /api/jobs': { scope: 'organisation', body: c => hostile(createJobSchema, walk(c)) },
  'PATCH /api/jobs/[id]': { scope: 'organisation', path: c => idFrom(c.own.jobId, c.other.jobId).map(id => `/api/jobs/${id}`), body: c => hostile(updateJobSchema, walk(c)) },
  'POST /api/jobs/import': { scope: 'organisation', body: c => hostile(breakdownExportSchema, walk(c)) },
  'POST /api/jobs/[id]/versions': { scope: 'organisation', path: c => idFrom(c.own.jobId, c.other.jobId).map(id => `/api/jobs/${id}/versions`), body: () => noBody },
  'PATCH /api/versions/[id]': { scope: 'organisation', path: c => idFrom(c.own.draftVersionId, c.own.publishedVersionId, c.other.draftVersionId, c.other.publishedVersionId).map(id => `/api/versions/${id}`), body: c => hostile(saveDraftSchema, walk(c, { hints: { revision } })) },
  'POST /api/versions/[id]/publish': { scope: 'organisation', path: c => idFrom(c.own.draftVersionId, c.other.draftVersionId, c.other.publishedVersionId).map(id => `/api/versions/${id}/publish`), body: c => hostile(publishSchema, walk(c)) },
  'POST /api/versions/[id]/retire': { scope: 'organisation', path: c => idFrom(c.own.publishedVersionId, c.other.publishedVersionId, c.other.draftVersionId).map(id => `/api/versions/${id}/retire`), body: () => noBody },
  'PUT /api/plan/[learnerId]/[jobId]': { scope: 'organisation', path: c => fc.tuple(idFrom(c.own.learnerId, c.other.learnerId), idFrom(c.own.jobId, c.other.jobId)).map(([l, j]) => `/api/plan/${l}/${j}`), body: c => hostile(planItemSchema, walk(c, { hints: { targetDate: calendarDay } })) },
  'DELETE /api/plan/[learnerId]/[jobId]': { scope: 'organisation', path: c => fc.tuple(idFrom(c.own.learnerId, c.other.learnerId), idFrom(c.own.jobId, c.other.jobId)).map(([l, j]) => `/api/plan/${l}/${j}`), body: () => noBody },
  'POST /api/sync': { scope: 'organisation', body: c => hostile(syncPushSchema, walk(c)) },
  // The content itself is judged (415 for what is not a photo of a kind we read).
  'POST /api/uploads': { scope: 'organisation', body: () => uploadBody, also: [415] },
  'POST /api/reminders/run': { scope: 'organisation', body: () => noBody },
  // Removals last, so the rows the routes above work on are there for them.
  'DELETE /api/invites/[id]': { scope: 'organisation', path: c => idFrom(c.own.inviteId, c.other.inviteId).map(id => `/api/invites/${id}`), body: () => noBody },
  'DELETE /api/members/[id]': { scope: 'organisation', path: c => idFrom(c.own.member.membershipId, c.other.adminMembershipId, c.other.member.membershipId).map(id => `/api/members/${id}`), body: () => noBody },
  'DELETE /api/work-areas/[id]': { scope: 'organisation', path: c => idFrom(c.own.workAreaId, c.other.workAreaId).map(id => `/api/work-areas/${id}`), body: () => noBody },
  'DELETE /api/jobs/[id]': { scope: 'organisation', path: c => idFrom(c.own.jobId, c.other.jobId).map(id => `/api/jobs/${id}`), body: () => noBody },
}

// ---- How it is sent and judged ---------------------------------------------------------------

/** Mostly JSON; sometimes the same body under another media type, which the route must refuse or read the same way. */
const mediaType = fc.constantFrom('application/json', 'application/json', 'application/json', 'application/json', 'application/json', 'application/json', 'text/plain', 'application/x-www-form-urlencoded')

function send(client: Client, method: string, path: string, body: unknown, type: string): Promise<Reply> {
  if (body instanceof FormData || body === undefined) return client.request(method, path, body)
  if (body instanceof RawBody) return client.request(method, path, body.text, { 'content-type': type })
  if (type === 'application/x-www-form-urlencoded' && body && typeof body === 'object' && !Array.isArray(body)) {
    const form = new URLSearchParams(Object.entries(body).map(([k, v]) => [k, typeof v === 'string' ? v : JSON.stringify(v) ?? '']))
    return client.request(method, path, form.toString(), { 'content-type': type })
  }
  return client.request(method, path, JSON.stringify(body) ?? 'null', { 'content-type': type })
}

function describeBody(body: unknown): string {
  if (body instanceof FormData) return `multipart ${[...body.keys()].join(',')}`
  const text = body instanceof RawBody ? String(body) : JSON.stringify(body) ?? 'undefined'
  return text.length > 600 ? `${text.slice(0, 600)}… (${text.length} characters)` : text
}

interface Session { client: Client, snapshot: () => Promise<Snapshot>, ctx: Ctx }

async function fuzz(key: string, spec: Fuzz) {
  const [method, template] = key.split(' ') as [string, string]
  const sessions: Session[] = spec.scope === 'public'
    ? [{ client: new Client(server.url, uniqueAddress()), snapshot: () => reader.everything(), ctx: { own: workers[0]!, other: victim } }]
    : workers.map(own => ({ client: own.admin, snapshot: () => reader.organisation(own.organisationId), ctx: { own, other: victim } }))
  const victimBefore = spec.scope === 'organisation' ? await reader.organisation(victim.organisationId) : undefined
  const tally = new Map<number, number>()

  const outcomes = await Promise.allSettled(sessions.map(async (session) => {
    const request = fc.record({
      path: spec.path ? spec.path(session.ctx) : fc.constant(template),
      body: spec.body ? spec.body(session.ctx) : noBody,
      type: mediaType,
    })
    let version = await reader.version()
    let last = await session.snapshot()
    await fc.assert(fc.asyncProperty(request, async ({ path, body, type }) => {
      const res = await send(session.client, method, path, body, type)
      tally.set(res.status, (tally.get(res.status) ?? 0) + 1)
      const also = [...(spec.also ?? []), ...(type === 'application/json' ? [] : [415])]
      const bad = badRefusal(res, also)
      if (bad) throw new Error(`${method} ${path} with ${describeBody(body)} (${type}): ${bad}`)
      // Nothing was committed to the file at all: no snapshot needed (most refusals).
      const nowVersion = await reader.version()
      if (nowVersion === version) return
      version = nowVersion
      const now = await session.snapshot()
      if (res.status >= 300) {
        const changed = changedTables(last, now)
        if (changed.length) throw new Error(`${method} ${path} refused with ${res.status} but changed ${changed.join(', ')}; body ${describeBody(body)}`)
      }
      last = now
    }), { numRuns: Math.ceil(RUNS / sessions.length) })
  }))
  const failed = outcomes.find((o): o is PromiseRejectedResult => o.status === 'rejected')
  if (failed) throw failed.reason

  if (victimBefore) expect(changedTables(victimBefore, await reader.organisation(victim.organisationId)), 'the other organisation changed').toEqual([])
  // The server is still up and answering.
  expect((await fetch(`${server.url}/api/health`)).status).toBe(200)
  return tally
}

describe('hostile input on every write route', () => {
  it('fuzzes every POST, PUT, PATCH and DELETE route under server/api/', () => {
    const writes = routeFiles().map(routeKey).filter(k => !k.startsWith('GET ')).sort()
    expect(Object.keys(FUZZ).sort()).toEqual(writes)
  })

  it.each(Object.entries(FUZZ))('%s', async (key, spec) => {
    const tally = await fuzz(key, spec)
    const runs = [...tally.values()].reduce((a, b) => a + b, 0)
    expect(runs).toBeGreaterThanOrEqual(RUNS)
    console.log(`${key}: ${[...tally].sort(([a], [b]) => a - b).map(([s, n]) => `${s}×${n}`).join(' ')}`)
  }, 300_000)
})
