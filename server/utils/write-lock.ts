// SQLite allows one writer. Two write transactions from this process would
// contend for the lock and, with a busy timeout, block the event loop inside
// the native call; queueing them here keeps the loop free. Other processes
// are covered by the busy timeout in useDb().
//
// Another process's hold on the lock (a second app instance, a backup, a sqlite3 shell) is waited
// for here, before the write starts, by asking a probe connection whether the lock is free
// (database-busy.ts) between short sleeps: the event loop goes on serving reads meanwhile, and no
// pooled connection's BEGIN ever fails busy (with @libsql/client 0.18 / libsql 0.5.29 a failed
// BEGIN leaves its statement in progress, and every later COMMIT on that connection fails:
// tursodatabase/libsql-client-ts#352). A write waits at most the busy timeout; then it is refused
// with a 503 and Retry-After instead of a 500. After one such refusal, writes already queued
// count their wait from when they arrived, so a lock held for minutes answers each of them
// within the busy timeout rather than one busy timeout after another.
import { BUSY_TIMEOUT_MS, databaseBusy, isDatabaseBusy, lockIsFree } from './database-busy'
import { letWaitingWriterIn, sayTakingWriteLock, sayWaitingForWriteLock } from './write-turns'

let tail: Promise<unknown> = Promise.resolve()
/** The last write was refused because another process held the lock. */
let lockHeldElsewhere = false

const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

/**
 * Waits until the write lock is free or `deadline` passes; true when free. Sleeps 1, 2, then 4 ms
 * between asks: another app process that lets this one in (write-turns.ts) leaves the lock unused
 * until the next ask, and one ask costs about 30 µs.
 */
async function lockFreeBy(deadline: number): Promise<boolean> {
  for (let pause = 1, waited = false; ; pause = Math.min(4, pause * 2), waited = true) {
    if (await lockIsFree()) {
      if (waited) sayTakingWriteLock()
      return true
    }
    sayWaitingForWriteLock()
    const left = deadline - Date.now()
    if (left <= 0) return false
    await sleep(Math.min(pause, left))
  }
}

export function serialiseWrite<T>(work: () => Promise<T>): Promise<T> {
  const arrived = Date.now()
  const attempt = async () => {
    // Another app process waiting for the lock goes first (write-turns.ts): SQLite keeps no queue.
    await letWaitingWriterIn()
    const deadline = lockHeldElsewhere ? arrived + BUSY_TIMEOUT_MS : Date.now() + BUSY_TIMEOUT_MS
    if (!await lockFreeBy(deadline)) {
      lockHeldElsewhere = true
      throw databaseBusy()
    }
    try {
      const result = await work()
      lockHeldElsewhere = false
      return result
    }
    catch (error) {
      // Taken by another process between the probe and the write, and held past the busy timeout.
      lockHeldElsewhere = isDatabaseBusy(error)
      throw lockHeldElsewhere ? databaseBusy() : error
    }
  }
  const run = tail.then(attempt, attempt)
  tail = run.catch(() => undefined)
  return run
}

/** Runs `work` in one write transaction, queued behind every other write of this process. */
export async function writeTransaction<T>(work: (tx: Parameters<Parameters<Db['transaction']>[0]>[0]) => Promise<T>): Promise<T> {
  const db = await useDb()
  return serialiseWrite(() => db.transaction(work, { behavior: 'immediate' }))
}
