// How this process's write transactions take SQLite's write lock on a local file that other
// processes share (a second app instance, DESIGN.md §5). @libsql/client begins a 'write'
// transaction, and a 'write' batch, with BEGIN IMMEDIATE as a prepared statement, so another
// process's hold on the lock is waited for inside SQLite's busy handler: a native call that holds
// this process's event loop, and one that, when it gives up with SQLITE_BUSY, leaves its statement
// in progress (libsql 0.5.29): every later COMMIT on that pooled connection then fails with
// "SQLITE_BUSY: cannot commit transaction - SQL statements in progress" until the garbage collector
// finalises the statement (tursodatabase/libsql-client-ts#352; seen as 500s on GET /api/plan with
// two processes under npm run bench:load). The write queue asks a probe connection first
// (write-lock.ts), but the other process can take the lock between that answer and the BEGIN.
// So here such a transaction begins DEFERRED, which takes no lock and cannot be busy, and takes the
// lock with a first statement that writes nothing, run through sqlite3_exec (executeMultiple, which
// finalises a statement that fails) with busy_timeout 0, asking again every millisecond or few
// until the busy timeout: nothing is left in progress, and requests go on meanwhile.
import type { Client, Transaction, TransactionMode } from '@libsql/client'
import { sayTakingWriteLock, sayWaitingForWriteLock } from './write-turns'

/**
 * Takes the write lock as the deferred transaction's first statement (so it is BEGIN IMMEDIATE's
 * equivalent: no read snapshot to go stale). The migrations table exists before any write of the
 * app (useDb() resolves after migrate()).
 */
const TAKE_LOCK = 'DELETE FROM __drizzle_migrations WHERE 0'

const isBusy = (error: unknown) => /^SQLITE_BUSY/.test(String((error as { code?: unknown })?.code ?? ''))
const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

/** Makes `client`'s write transactions and write batches take the lock as described above (file databases only). */
export function beginWritesWithoutStuckStatements(client: Client, busyTimeoutMs: number): void {
  const transaction = client.transaction.bind(client)

  async function attempt(): Promise<Transaction | null> {
    const tx = await transaction('deferred')
    try {
      await tx.executeMultiple(`PRAGMA busy_timeout = 0; ${TAKE_LOCK}`)
    }
    catch (error) {
      await tx.executeMultiple(`PRAGMA busy_timeout = ${busyTimeoutMs}`).catch(() => undefined)
      tx.close()
      if (isBusy(error)) return null
      throw error
    }
    await tx.executeMultiple(`PRAGMA busy_timeout = ${busyTimeoutMs}`)
    return tx
  }

  client.transaction = async (mode?: TransactionMode): Promise<Transaction> => {
    if (mode === 'read' || mode === 'deferred') return transaction(mode)
    const deadline = Date.now() + busyTimeoutMs
    for (let pause = 1, waited = false; ; pause = Math.min(8, pause * 2), waited = true) {
      let tx: Transaction | null
      try {
        tx = await attempt()
      }
      catch {
        // Not busy (the migrations table missing on a database still being set up): the plain way.
        return transaction(mode)
      }
      if (tx) {
        if (waited) sayTakingWriteLock()
        return tx
      }
      sayWaitingForWriteLock()
      if (Date.now() >= deadline) {
        throw Object.assign(new Error('SQLITE_BUSY: database is locked (another process held the write lock past the busy timeout)'), { code: 'SQLITE_BUSY' })
      }
      await sleep(pause)
    }
  }

  const batch = client.batch.bind(client)
  client.batch = async (statements: Parameters<Client['batch']>[0], mode?: TransactionMode) => {
    if (mode !== 'write') return batch(statements, mode)
    const tx = await client.transaction('write')
    try {
      const results = await tx.batch(statements.map(s => (Array.isArray(s) ? { sql: s[0], args: s[1] ?? [] } : s)))
      await tx.commit()
      return results
    }
    finally {
      tx.close()
    }
  }
}
