// What the lesson half (sync-merge.ts) and the spot-check half (sync-checks.ts) of a push share:
// bounded statements with yields between them, the per-item error words, the last-writer-wins
// clock, and the check that every id an item names belongs to the caller's organisation.
import type { Client, Transaction } from '@libsql/client'
import type { z } from 'zod'

export interface Rejection { id: string, reason: string }

// SQLite allows 32,766 bound variables per statement. The chunks stay far below it because each
// chunk is one synchronous native call that holds the event loop: a request waiting behind the
// merge waits about one chunk per step it takes (a session read is several steps). Larger chunks
// were measured to write hardly faster (2,900-row inserts: 3 % quicker, each statement 5× longer).
export const SYNC_CHUNK = 500

/** Items validated between two yields to the event loop (about 2 ms of zod). */
export const VALIDATE_CHUNK = 250

export const yieldToLoop = () => new Promise<void>(resolve => setImmediate(resolve))

export function inChunks<T>(items: readonly T[], size = SYNC_CHUNK): T[][] {
  const out: T[][] = []
  for (let i = 0; i < items.length; i += size) out.push(items.slice(i, i + size))
  return out
}

function sqlPlaceholders(n: number) {
  return Array.from({ length: n }, () => '?').join(',')
}

/** `select … where … in (ids)` over the distinct ids, one bounded statement at a time. */
export async function selectWhereIn(runner: Client | Transaction, sqlBefore: string, ids: readonly string[], sqlAfter = '', extraArgs: Array<string | number> = []) {
  const rows: Record<string, unknown>[] = []
  for (const [i, part] of inChunks([...new Set(ids)]).entries()) {
    if (i > 0) await yieldToLoop()
    const rs = await runner.execute({ sql: `${sqlBefore} (${sqlPlaceholders(part.length)}) ${sqlAfter}`, args: [...extraArgs, ...part] })
    rows.push(...(rs.rows as unknown as Record<string, unknown>[]))
  }
  return rows
}

/** The first problem zod found, with where it is ("startedAt: …"). */
export function firstIssue(error: z.ZodError): string {
  const first = error.issues[0]
  return first ? `${first.path.join('.') || 'item'}: ${first.message}` : 'not valid'
}

/** The id to name in a rejection, even for an item too broken to parse. */
export function pushedItemId(item: unknown): string {
  const id = (item as { id?: unknown } | null)?.id
  return typeof id === 'string' ? id.slice(0, 80) : '(no id)'
}

/**
 * Last-writer-wins: [closed (signed off / finished) 1 or 0, client time, device id, content].
 * Closed beats open, then the later time, then the device id, and last the content itself, so even
 * two different states stamped in the same millisecond on one tablet settle the same way whatever
 * order they arrive in.
 */
export type SyncClock = [number, number, string, string]

export function clockIsNewer(a: SyncClock, b: SyncClock) {
  for (let i = 0; i < a.length; i++) if (a[i] !== b[i]) return a[i]! > b[i]!
  return false
}

interface PinnedItem { id: string, learnerId: string, jobId: string, versionId: string, coachUserId: string }

/**
 * The items whose learner, job, published version of that job and coach all belong to this
 * organisation; every other one is rejected with a reason a person can act on. `draftReason`
 * names the item ("A lesson must be pinned to a published breakdown, not a draft."). The version
 * rows come back (with their content when asked) for the caller's own checks.
 */
export async function pinnedToOrganisation<T extends PinnedItem>(client: Client, organisationId: string, items: readonly T[], draftReason: string, rejected: Rejection[], withContent = false) {
  const versions = new Map<string, Record<string, unknown>>()
  if (!items.length) return { valid: [] as T[], versions }
  const idsIn = async (table: string, ids: string[]) => new Set((await selectWhereIn(client, `select id from ${table} where organisation_id = ? and id in`, ids, '', [organisationId])).map(r => r.id as string))
  const learnerIds = await idsIn('learners', items.map(i => i.learnerId))
  const jobIds = await idsIn('jobs', items.map(i => i.jobId))
  for (const row of await selectWhereIn(client, `select id, job_id, status${withContent ? ', content' : ''} from breakdown_versions where organisation_id = ? and id in`, items.map(i => i.versionId), '', [organisationId])) {
    versions.set(row.id as string, row)
  }
  const coachIds = new Set((await selectWhereIn(client, 'select user_id from memberships where organisation_id = ? and role in (\'admin\', \'coach\') and user_id in', items.map(i => i.coachUserId), '', [organisationId])).map(r => r.user_id as string))
  const valid = items.filter((item) => {
    const v = versions.get(item.versionId)
    const reason = !learnerIds.has(item.learnerId)
      ? 'The learner is not in this organisation\'s roster.'
      : !jobIds.has(item.jobId)
          ? 'The job is not one of this organisation\'s jobs.'
          : !v || v.job_id !== item.jobId
              ? 'The breakdown version does not belong to this job.'
              : v.status === 'draft'
                ? draftReason
                : !coachIds.has(item.coachUserId)
                    ? 'The coach is not a coach or admin of this organisation.'
                    : ''
    if (reason) rejected.push({ id: item.id, reason })
    return !reason
  })
  return { valid, versions }
}
