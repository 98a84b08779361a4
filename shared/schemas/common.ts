import { z } from 'zod'

// C0 and C1 control characters (NUL, tab, CR, LF, ESC…), DEL, and the Unicode line and paragraph
// separators. A one-line name or title holding them could start a new line in a mail's text or, if
// it ever reached a header unfolded, a new header ("Bcc:"); nothing a person types needs them.
// eslint-disable-next-line no-control-regex -- finding control characters is the point
const CONTROL_CHARACTERS = /[\u0000-\u001F\u007F-\u009F\u2028\u2029]/

/** True when the text has no line break, tab or other control character. */
export function isSingleLine(value: string): boolean {
  return !CONTROL_CHARACTERS.test(value)
}

/** Route params that name one row: a UUID, checked before any query runs. */
export const idParamsSchema = z.object({ id: z.uuid('That id is not valid.') })
