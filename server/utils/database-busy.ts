// When another process holds SQLite's write lock (a second app instance in a long write, a backup
// or maintenance job, someone's sqlite3 shell left in BEGIN IMMEDIATE), a write waits for it up to
// the busy timeout (write-lock.ts) and is then refused: not the caller's fault, and nothing was
// changed, so it is answered as 503 with Retry-After (the retry-after plugin sets the header) and
// a message a person can act on, never a bare 500.
import { createClient, type Client } from '@libsql/client'
import { createError } from 'h3'

/** How long a write waits for another process's hold on the lock: the busy timeout of db.ts. */
export const BUSY_TIMEOUT_MS = 5000
/** How long a client is asked to wait before trying a refused write again. */
export const BUSY_RETRY_AFTER_SECONDS = 5

/** True when SQLite (through libSQL or Drizzle, at any depth of `cause`) refused because the database is locked. */
export function isDatabaseBusy(error: unknown): boolean {
  for (let e = error as { code?: unknown, cause?: unknown } | undefined, depth = 0; e && depth < 5; e = e.cause as typeof e, depth++) {
    if (typeof e.code === 'string' && (e.code.startsWith('SQLITE_BUSY') || e.code.startsWith('SQLITE_LOCKED'))) return true
  }
  return false
}

/** The answer to a write refused because another process holds the write lock. */
export function databaseBusy() {
  const message = 'The database is busy with other work just now, so nothing was changed. Try again in a few seconds.'
  return createError({ statusCode: 503, statusMessage: 'Service Unavailable', message, data: { message, retryAfterSeconds: BUSY_RETRY_AFTER_SECONDS } })
}

/** Seconds a refused request's error asks the client to wait (data.retryAfterSeconds), or null. */
export function retryAfterOf(error: unknown): number | null {
  const seconds = (error as { data?: { retryAfterSeconds?: unknown } } | undefined)?.data?.retryAfterSeconds
  return typeof seconds === 'number' && Number.isFinite(seconds) && seconds > 0 ? Math.ceil(seconds) : null
}

/**
 * A connection with no busy timeout, used only to ask whether the write lock is free: BEGIN
 * IMMEDIATE and ROLLBACK, answered at once either way. Part of the write queue's infrastructure
 * (not a data client: it never reads or writes a row). executeMultiple runs through sqlite3_exec,
 * which finalises a statement that failed busy, so the probe itself never ends up with the stuck
 * statement described in write-lock.ts. Only for a local file; a libSQL server handles its own
 * locking, so there the answer is always "try".
 */
let probe: Client | undefined
/** The file useDb() opened (db.ts tells it); none, as in unit tests that hand a client in: nothing to probe. */
let probedUrl: string | undefined

/** Called by useDb() for a local file database: the probe asks about this one. */
export function probeWriteLockOf(url: string): void {
  probedUrl = url
}

/** The local file whose write lock this process's writes wait for, or undefined (see probedUrl). */
export function writeLockDatabaseUrl(): string | undefined {
  return probedUrl
}

export async function lockIsFree(): Promise<boolean> {
  if (!probedUrl) return true
  probe ??= createClient({ url: probedUrl, timeout: 0, concurrency: 1 })
  try {
    await probe.executeMultiple('BEGIN IMMEDIATE; ROLLBACK')
    return true
  }
  catch (error) {
    if (isDatabaseBusy(error)) return false
    throw error
  }
}
