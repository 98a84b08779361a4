// SQLite copies the write-ahead log back into the database file (a checkpoint) inside the commit of
// whichever connection takes the log past wal_autocheckpoint pages (1,000 by default). A 10,000-event
// push writes more than that, so its commit did the checkpoint too: about 10 ms more of native work
// on this process's one JavaScript thread, with every request waiting. Here each write
// transaction's connection is told to leave that to others (up to a safety net of
// WAL_AUTOCHECKPOINT_PAGES), and after each commit a worker thread with its own connection runs
// `PRAGMA wal_checkpoint(PASSIVE)`: it never waits for readers or writers, and it holds no lock a
// request needs, so requests go on while it works. Process infrastructure, like the write queue.
import { createRequire } from 'node:module'
import { Worker } from 'node:worker_threads'
import type { Client, Transaction, TransactionMode } from '@libsql/client'

/** A connection that commits past this many WAL pages still checkpoints itself (the worker has fallen behind or failed). */
export const WAL_AUTOCHECKPOINT_PAGES = 10_000

// The worker: one connection of its own (libsql, the engine under @libsql/client), one checkpoint per message.
const WORKER_SOURCE = `
const { parentPort, workerData } = require('node:worker_threads')
const Database = require(workerData.libsql)
const db = new Database(workerData.path, { timeout: 5000 })
parentPort.on('message', () => {
  let problem = null
  try { db.prepare('PRAGMA wal_checkpoint(PASSIVE)').all() }
  catch (error) { problem = String((error && error.message) || error) }
  parentPort.postMessage(problem)
})
`

interface Checkpointer { worker: Worker, running: boolean, again: boolean }

/** Makes `client`'s write transactions leave checkpoints to a worker thread (file databases only). */
export function checkpointInBackground(client: Client, path: string): void {
  let checkpointer: Checkpointer | null | undefined
  const start = (): Checkpointer | null => {
    try {
      const libsql = createRequire(import.meta.url).resolve('libsql')
      const worker = new Worker(WORKER_SOURCE, { eval: true, workerData: { libsql, path } })
      worker.unref()
      const state: Checkpointer = { worker, running: false, again: false }
      worker.on('message', (problem: string | null) => {
        if (problem) console.warn('[fourfold] background WAL checkpoint:', problem)
        state.running = false
        if (state.again) checkpoint()
      })
      worker.on('error', (error) => {
        // SQLite's own checkpoints at WAL_AUTOCHECKPOINT_PAGES take over.
        console.error('[fourfold] the WAL checkpoint worker stopped:', error)
        checkpointer = null
      })
      return state
    }
    catch (error) {
      console.error('[fourfold] no WAL checkpoint worker:', error)
      return null
    }
  }
  // One checkpoint at a time; commits meanwhile ask for one more after it.
  const checkpoint = () => {
    if (checkpointer === undefined) checkpointer = start()
    if (!checkpointer) return
    if (checkpointer.running) {
      checkpointer.again = true
      return
    }
    checkpointer.again = false
    checkpointer.running = true
    checkpointer.worker.postMessage(null)
  }

  const transaction = client.transaction.bind(client)
  client.transaction = async (mode?: TransactionMode): Promise<Transaction> => {
    const tx = await transaction(mode)
    // Per connection (each pooled connection keeps it); cheap enough to say on every transaction.
    await tx.execute(`PRAGMA wal_autocheckpoint = ${WAL_AUTOCHECKPOINT_PAGES}`)
    if (mode === 'read') return tx
    const commit = tx.commit.bind(tx)
    tx.commit = async () => {
      await commit()
      checkpoint()
    }
    return tx
  }
}
