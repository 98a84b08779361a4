// The write queue when another connection holds SQLite's write lock (server/utils/write-lock.ts,
// database-busy.ts): a write waits for the lock without blocking the event loop and goes through
// when it is released in time; held past the busy timeout, the write is refused with a 503 that
// asks to come back (data.retryAfterSeconds, sent as Retry-After) and never starts; writes queued
// meanwhile are refused within their own busy timeout; released, writes go through again, and a
// write transaction on the app's connections still commits (no statement left stuck by a failed
// BEGIN, tursodatabase/libsql-client-ts#352). A real SQLite file in WAL mode; the holder is a
// second connection in BEGIN IMMEDIATE, as a second app instance or a sqlite3 shell would be.
import { mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { createClient, type Client, type Transaction } from '@libsql/client'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { serialiseWrite } from '../../server/utils/write-lock'
import { isDatabaseBusy, probeWriteLockOf, retryAfterOf } from '../../server/utils/database-busy'

let dir: string
let app: Client
let other: Client

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'fourfold-write-lock-'))
  const url = `file:${join(dir, 'lock.db')}`
  // The probe asks about this file, as useDb() arranges on the server.
  probeWriteLockOf(url)
  // A short busy timeout keeps the test quick; the server's is 5 s (db.ts).
  app = createClient({ url, timeout: 300 })
  other = createClient({ url, timeout: 300 })
  await app.execute('PRAGMA journal_mode = WAL')
  await app.execute('create table marks (id text primary key)')
})

afterAll(async () => {
  app?.close()
  other?.close()
  if (dir) await rm(dir, { recursive: true, force: true })
})

const insert = (id: string) => () => app.execute({ sql: 'insert into marks (id) values (?)', args: [id] })
const refusal = (p: Promise<unknown>) => p.then(() => null, (error: unknown) => error as { statusCode?: number, data?: { message?: string } })

/** Counts timer ticks while `p` runs: a blocked event loop would show almost none. */
async function ticksDuring<T>(p: Promise<T>): Promise<{ value: T, ticks: number }> {
  let ticks = 0
  const timer = setInterval(() => ticks++, 20)
  try {
    return { value: await p, ticks }
  }
  finally {
    clearInterval(timer)
  }
}

describe('a write lock held by another connection', () => {
  it('waits for a lock released in time, with the event loop free meanwhile', async () => {
    await serialiseWrite(insert('saved-before'))
    const holder: Transaction = await other.transaction('write')
    setTimeout(() => void holder.rollback(), 600)
    const { value, ticks } = await ticksDuring(refusal(serialiseWrite(insert('waited'))))
    expect(value).toBeNull()
    // 600 ms of waiting at one tick per 20 ms; a loop blocked in the native busy wait would give none.
    expect(ticks).toBeGreaterThan(10)
  })

  it('refuses with 503 and a retry time past the busy timeout, and lets writes through once the lock is released', async () => {
    const holder: Transaction = await other.transaction('write')
    await holder.execute({ sql: 'insert into marks (id) values (?)', args: ['holder'] })

    let started = 0
    const counted = (id: string) => () => {
      started += 1
      return insert(id)()
    }
    const first = await ticksDuring(refusal(serialiseWrite(counted('during-1'))))
    expect(first.value?.statusCode).toBe(503)
    expect(first.value?.data?.message).toMatch(/busy with other work.*nothing was changed.*try again in a few seconds/i)
    expect(retryAfterOf(first.value)).toBe(5)
    expect(first.ticks).toBeGreaterThan(50)

    // Three more queued while it is still held: each is refused within its own busy timeout, none starts.
    const queued = await Promise.all([1, 2, 3].map(n => refusal(serialiseWrite(counted(`during-q${n}`)))))
    expect(queued.map(e => e?.statusCode)).toEqual([503, 503, 503])
    expect(started).toBe(0)

    // Released: the next write runs and is kept; nothing from the refused ones is there.
    await holder.rollback()
    await serialiseWrite(insert('after'))
    const tx = await app.transaction('write')
    await tx.execute({ sql: 'insert into marks (id) values (?)', args: ['in-a-transaction'] })
    await tx.commit()
    const rows = await app.execute('select id from marks order by id')
    expect(rows.rows.map(r => r.id)).toEqual(['after', 'in-a-transaction', 'saved-before', 'waited'])
  }, 30_000)

  it('tells SQLITE_BUSY apart from other failures at any depth of cause, and leaves other errors as they were', async () => {
    expect(isDatabaseBusy({ code: 'SQLITE_BUSY' })).toBe(true)
    expect(isDatabaseBusy(new Error('Failed query', { cause: { code: 'SQLITE_BUSY_SNAPSHOT' } }))).toBe(true)
    expect(isDatabaseBusy(new Error('UNIQUE constraint failed', { cause: { code: 'SQLITE_CONSTRAINT' } }))).toBe(false)
    expect(isDatabaseBusy(null)).toBe(false)
    await serialiseWrite(insert('twice'))
    const duplicate = await refusal(serialiseWrite(insert('twice')))
    expect(duplicate?.statusCode).toBeUndefined()
    expect(String((duplicate as unknown as Error).message)).toMatch(/UNIQUE/)
  })
})
