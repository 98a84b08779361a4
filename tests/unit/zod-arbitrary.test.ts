// The zod → fast-check walker the hostile-input fuzz is built on (tests/support/zod-arbitrary.ts):
// its valid-ish values mostly pass their schema, its hostile values mostly do not, and it mixes in
// the ids, junk and privileged keys the fuzz relies on. If the walker drifted (a zod upgrade
// renaming its internals), the fuzz would quietly send junk only; these checks catch that.
import { describe, expect, it } from 'vitest'
import fc from 'fast-check'
import { z } from 'zod'
import { hostile, PRIVILEGED_KEYS, RawBody, validish } from '../support/zod-arbitrary'
import { signupSchema } from '../../shared/schemas/auth'
import { createInviteSchema } from '../../shared/schemas/invites'
import { createJobSchema } from '../../shared/schemas/jobs'
import { saveDraftSchema } from '../../shared/schemas/breakdown'
import { breakdownExportSchema } from '../../shared/schemas/breakdown-export'
import { planItemSchema } from '../../shared/schemas/plan'
import { syncCheckSchema, syncEventSchema, syncLessonSchema } from '../../shared/schemas/sync'
import { meSettingsSchema } from '../../shared/schemas/me'

const share = (values: unknown[], test: (v: unknown) => boolean) => values.filter(test).length / values.length

describe('validish', () => {
  it.each([
    // Addresses from fc.emailAddress() (RFC 5322) are mixed in on purpose; zod refuses many of them.
    ['signup', signupSchema, 0.7],
    ['invite', createInviteSchema, 0.7],
    ['job', createJobSchema, 0.6],
    ['draft save', saveDraftSchema, 0.6],
    ['export document', breakdownExportSchema, 0.4],
    ['sync lesson', syncLessonSchema, 0.6],
    ['sync check', syncCheckSchema, 0.6],
    ['sync event', syncEventSchema, 0.8],
    ['settings', meSettingsSchema, 1],
  ] as const)('makes values the %s schema mostly takes', (_name, schema, atLeast) => {
    const values = fc.sample(validish(schema), { numRuns: 300, seed: 7 })
    expect(share(values, v => schema.safeParse(v).success)).toBeGreaterThanOrEqual(atLeast)
  })

  it('takes a hint for a field whose shape says too little (a date checked by a refine)', () => {
    const day = fc.date({ min: new Date('2000-01-01T00:00:00Z'), max: new Date('2100-12-31T00:00:00Z'), noInvalidDate: true }).map(d => d.toISOString().slice(0, 10))
    const plain = fc.sample(validish(planItemSchema), { numRuns: 300, seed: 5 })
    const hinted = fc.sample(validish(planItemSchema, { hints: { targetDate: day } }), { numRuns: 300, seed: 5 })
    expect(share(hinted, v => planItemSchema.safeParse(v).success)).toBeGreaterThan(0.9)
    expect(share(plain, v => planItemSchema.safeParse(v).success)).toBeLessThan(0.5)
  })

  it('draws uuid fields from the known ids as well as random ones', () => {
    const known = ['8d2f6a38-4b7e-4c55-9b0e-2f1b8c1d9e00', '3b1c7e52-0f4d-4a8e-b6d1-9c2a5e7f1a33']
    const ids = fc.sample(validish(z.object({ id: z.uuid() }), { ids: known }), { numRuns: 400, seed: 3 }).map(v => (v as { id: string }).id)
    for (const id of known) expect(ids).toContain(id)
    expect(ids.filter(id => !known.includes(id)).length).toBeGreaterThan(100)
  })
})

describe('hostile', () => {
  const values = fc.sample(hostile(signupSchema, { emails: ['taken@test.example'] }), { numRuns: 1000, seed: 11 })

  it('mostly breaks the schema, yet sends the whole valid shape too', () => {
    const passing = share(values, v => signupSchema.safeParse(v).success)
    expect(passing).toBeGreaterThan(0.05)
    expect(passing).toBeLessThan(0.5)
  })

  it('sends text that is not JSON, values that are not objects, and objects with privileged keys', () => {
    expect(share(values, v => v instanceof RawBody)).toBeGreaterThan(0.03)
    expect(share(values, v => v === null || typeof v !== 'object')).toBeGreaterThan(0.03)
    const privileged = values.filter(v => v && typeof v === 'object' && !(v instanceof RawBody) && Object.keys(v).some(k => (PRIVILEGED_KEYS as readonly string[]).includes(k)))
    expect(privileged.length).toBeGreaterThan(20)
  })

  it('breaks single fields: wrong types, missing keys, strings past the limit, known addresses', () => {
    const objects = values.filter((v): v is Record<string, unknown> => Boolean(v) && typeof v === 'object' && !Array.isArray(v) && !(v instanceof RawBody))
    expect(objects.some(o => o.name !== undefined && typeof o.name !== 'string')).toBe(true)
    expect(objects.some(o => !('email' in o))).toBe(true)
    expect(objects.some(o => typeof o.organisation === 'string' && o.organisation.length === 121)).toBe(true)
    expect(objects.some(o => o.email === 'taken@test.example')).toBe(true)
  })
})
