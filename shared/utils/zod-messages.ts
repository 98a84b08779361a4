// Words for the zod issues a schema gives no message of its own, so a refusal never shows a person
// zod's programmer defaults ("Invalid input: expected object, received undefined"). Used as the
// per-parse error map (`schema.safeParse(value, { error: personMessage })`): a message written
// on the schema still wins over these.
import type { z } from 'zod'

const KINDS: Record<string, string> = {
  string: 'text',
  number: 'a number',
  int: 'a whole number',
  boolean: 'true or false',
  object: 'a group of fields',
  array: 'a list',
  record: 'a group of fields',
  null: 'null',
}

function kindOf(value: unknown): string {
  if (value === null) return 'null'
  if (Array.isArray(value)) return 'a list'
  if (typeof value === 'object') return 'a group of fields'
  return KINDS[typeof value] ?? typeof value
}

const FORMATS: Record<string, string> = {
  uuid: 'That id is not valid.',
  guid: 'That id is not valid.',
  email: 'Enter an e-mail address such as name@example.com.',
  datetime: 'Use an ISO 8601 date and time, such as 2026-03-01T09:30:00.000Z.',
  date: 'Use a date written YYYY-MM-DD.',
}

function limitWords(issue: { origin?: string, maximum?: unknown, minimum?: unknown, inclusive?: boolean }, big: boolean): string | undefined {
  const bound = Number(big ? issue.maximum : issue.minimum)
  if (!Number.isFinite(bound)) return undefined
  const n = issue.inclusive === false ? (big ? bound - 1 : bound + 1) : bound
  switch (issue.origin) {
    case 'string': return big ? `Use at most ${n} characters.` : n <= 1 ? 'Fill this in.' : `Use at least ${n} characters.`
    case 'array': case 'set': return big ? `Send at most ${n} items.` : `Send at least ${n} item${n === 1 ? '' : 's'}.`
    case 'number': case 'int': case 'bigint':
      if (big) return issue.inclusive === false ? `Use less than ${bound}.` : `Use ${bound} or less.`
      return issue.inclusive === false ? `Use more than ${bound}.` : `Use ${bound} or more.`
    default: return undefined
  }
}

/** A message for a person, or undefined to keep zod's own. */
export function personMessage(issue: z.core.$ZodRawIssue): string | undefined {
  switch (issue.code) {
    case 'invalid_type':
      if (issue.input === undefined) return 'This is missing.'
      return `Send ${KINDS[issue.expected] ?? issue.expected} here, not ${kindOf(issue.input)}.`
    case 'too_big': return limitWords(issue, true)
    case 'too_small': return limitWords(issue, false)
    case 'invalid_format': return FORMATS[issue.format] ?? 'That is not written in the expected form.'
    case 'invalid_value': return `Choose one of: ${issue.values.map(v => JSON.stringify(v)).join(', ')}.`
    case 'unrecognized_keys': return `Leave out ${issue.keys.map(k => `"${k}"`).join(', ')}: not a field here.`
    case 'invalid_union': return 'That is none of the shapes accepted here.'
    case 'invalid_key': return 'One of the names in this group is not accepted.'
    case 'invalid_element': return 'One of the items in this group is not accepted.'
    case 'not_multiple_of': return `Use a multiple of ${String(issue.divisor)}.`
    default: return undefined
  }
}
