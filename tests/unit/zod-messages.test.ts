// Words for zod issues a schema has no message for (shared/utils/zod-messages.ts): what a refused
// request shows beside a field instead of zod's "Invalid input: expected string, received undefined".
import { describe, expect, it } from 'vitest'
import { z } from 'zod'
import { personMessage } from '../../shared/utils/zod-messages'

const messagesOf = (schema: z.ZodType, value: unknown) => {
  const result = schema.safeParse(value, { error: personMessage })
  return result.success ? [] : result.error.issues.map(i => `${i.path.join('.')}: ${i.message}`)
}

describe('personMessage', () => {
  it('says a field is missing, or what kind of value it needs', () => {
    const schema = z.object({ revision: z.number().int(), content: z.object({ units: z.array(z.string()) }), on: z.boolean() })
    expect(messagesOf(schema, { revision: 'x', content: { units: {} }, on: null })).toEqual([
      'revision: Send a number here, not text.',
      'content.units: Send a list here, not a group of fields.',
      'on: Send true or false here, not null.',
    ])
    expect(messagesOf(schema, {})).toEqual(['revision: This is missing.', 'content: This is missing.', 'on: This is missing.'])
  })

  it('words limits, formats, choices and unknown keys', () => {
    expect(messagesOf(z.string().max(3), 'abcd')).toEqual([': Use at most 3 characters.'])
    expect(messagesOf(z.array(z.number()).min(1), [])).toEqual([': Send at least 1 item.'])
    expect(messagesOf(z.number().int().min(0).max(500), 501)).toEqual([': Use 500 or less.'])
    expect(messagesOf(z.uuid(), 'nope')).toEqual([': That id is not valid.'])
    expect(messagesOf(z.enum(['a', 'b']), 'c')).toEqual([': Choose one of: "a", "b".'])
    expect(messagesOf(z.strictObject({ a: z.string() }), { a: 'x', role: 'admin' })).toEqual([': Leave out "role": not a field here.'])
  })

  it('leaves a message written on the schema as it is', () => {
    expect(messagesOf(z.string({ error: 'Enter a name.' }).min(1, 'Enter a name.'), undefined)).toEqual([': Enter a name.'])
    expect(messagesOf(z.string().max(3, 'Keep it short.'), 'abcd')).toEqual([': Keep it short.'])
  })
})
