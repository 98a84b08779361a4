// Several app processes on one SQLite file (DESIGN.md §5, "several instances") take turns at its one
// write lock. SQLite keeps no queue: a waiting process only gets the lock if it asks in the instant
// between two of the holder's transactions, and a busy process begins its next write microseconds
// after its last commit. Under steady load on both, one of them never got in and its writes were
// refused after the busy timeout (npm run bench:load, two processes: 503s).
// So a process waiting for the lock says so in a small file beside the database, and a process
// about to begin a write first lets that waiter in: it holds back until the waiter says it is
// writing (or HOLD_BACK_MS passes), then asks for the lock as usual (write-lock.ts). With one
// process nobody waits and each write costs one failed file read. Process infrastructure, like the
// write queue; only for a local file (a libSQL server orders its writers itself).
import { randomUUID } from 'node:crypto'
import { readFileSync, writeFileSync } from 'node:fs'
import { writeLockDatabaseUrl } from './database-busy'

/** This process's name in the file. */
const SELF = `${process.pid}.${randomUUID().slice(0, 8)}`
/** A waiter says so again every few ms (write-lock.ts, write-begin.ts); an older "waiting" is from one that stopped (or whose event loop is held up). */
const WAITING_FRESH_MS = 250
/** The longest a process leaves the lock free for a waiter: far more than a waiter's pause between asks (4–8 ms). */
const HOLD_BACK_MS = 100
/** After "writing", the waiter's BEGIN follows within microseconds; this much margin before asking ourselves. */
const SETTLE_MS = 2

type Turn = { who: string, state: 'waiting' | 'writing', at: number }

function turnFile(): string | null {
  const url = writeLockDatabaseUrl()
  if (!url?.startsWith('file:')) return null
  const path = url.slice('file:'.length).split('?')[0]
  return path && path !== ':memory:' ? `${path}-write-turn` : null
}

function say(state: Turn['state']) {
  const file = turnFile()
  if (!file) return
  try {
    writeFileSync(file, `${SELF} ${state} ${Date.now()}`)
  }
  catch { /* no file, no turns: the lock is still SQLite's */ }
}

function readTurn(file: string): Turn | null {
  try {
    const [who, state, at] = readFileSync(file, 'utf8').split(' ')
    return who && (state === 'waiting' || state === 'writing') ? { who, state, at: Number(at) } : null
  }
  catch {
    return null
  }
}

/** After a probe found the write lock held by another process. */
export function sayWaitingForWriteLock() {
  say('waiting')
}

/** The lock was free after this process had waited: it begins its write now. */
export function sayTakingWriteLock() {
  say('writing')
}

/** Before a write: when another process is waiting for the lock, leave it free until that one has it. */
export async function letWaitingWriterIn(): Promise<void> {
  const file = turnFile()
  if (!file) return
  const first = readTurn(file)
  if (!first || first.who === SELF || first.state !== 'waiting' || Date.now() - first.at > WAITING_FRESH_MS) return
  const until = Date.now() + HOLD_BACK_MS
  while (Date.now() < until) {
    await new Promise(resolve => setTimeout(resolve, 1))
    const turn = readTurn(file)
    if (!turn || turn.state === 'writing') break
  }
  await new Promise(resolve => setTimeout(resolve, SETTLE_MS))
}
