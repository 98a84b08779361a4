// What a refusal must look like (issue 7, "Hostile input"): never a 5xx; a status from the short
// list a client can act on; and a `data.message` written for a person, not a stack trace.
import type { Reply } from './http'

/** The statuses a route may refuse with. 415 is added only where a body's media type is judged (uploads). */
export const REFUSALS = [400, 401, 403, 404, 409, 413, 422, 429] as const

// Words that mean a program is talking, not a person: internals that leaked into a message.
const INTERNALS = /\b(?:SQLITE\w*|libsql|TypeError|ReferenceError|RangeError|SyntaxError|ZodError|Drizzle|undefined|NaN|Internal Server Error|Cannot read|is not a function|at \S+ \(|node_modules)\b|\[object Object\]|\.ts:\d+/i

/** Why a message is not one a person can read, or null when it is. */
export function unreadable(message: unknown): string | null {
  if (typeof message !== 'string') return `data.message is ${message === undefined ? 'missing' : typeof message}`
  if (message.length < 8 || message.length > 600) return `data.message has ${message.length} characters: ${JSON.stringify(message)}`
  // A sentence: words, and a full stop (or ? ! or a closing quote) at the end. Not a capital at the
  // start: a message may begin with a name as the person wrote it ("ref is archived. …").
  if (!/\p{L}{2,}\s+\S/u.test(message) || !/[.?!”")]$/.test(message.trim())) return `data.message is not a sentence: ${JSON.stringify(message)}`
  if (INTERNALS.test(message)) return `data.message shows internals: ${JSON.stringify(message)}`
  return null
}

/** Why this answer breaks the rules for a refusal, or null when it is a success or a proper refusal. */
export function badRefusal(res: Reply, also: readonly number[] = []): string | null {
  if (res.status >= 500) return `answered ${res.status}: ${res.text.slice(0, 300)}`
  if (res.status >= 200 && res.status < 300) return null
  if (![...REFUSALS, ...also].includes(res.status)) return `answered ${res.status}, not one of ${[...REFUSALS, ...also].join('/')}: ${res.text.slice(0, 300)}`
  const data = (res.body as { data?: { message?: unknown, fieldErrors?: unknown } } | null)?.data
  const why = unreadable(data?.message)
  if (why) return `${res.status}: ${why}`
  if (data?.fieldErrors !== undefined) {
    const fields = data.fieldErrors
    if (!fields || typeof fields !== 'object' || Array.isArray(fields)) return `${res.status}: fieldErrors is not a record`
    for (const [field, messages] of Object.entries(fields)) {
      if (!Array.isArray(messages) || !messages.length) return `${res.status}: fieldErrors.${field} is not a list of messages`
      for (const m of messages) {
        if (typeof m !== 'string' || !m.trim() || INTERNALS.test(m)) return `${res.status}: fieldErrors.${field} has ${JSON.stringify(m)}`
      }
    }
  }
  return null
}
