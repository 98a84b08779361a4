// One lazy database client per process. The first caller opens the connection
// and applies the committed migrations; everyone else awaits the same promise,
// because Nitro does not wait for plugins before serving requests.
import { existsSync } from 'node:fs'
import { dirname, resolve } from 'node:path'
import { createClient } from '@libsql/client'
import { drizzle } from 'drizzle-orm/libsql'
import { migrate } from 'drizzle-orm/libsql/migrator'
import * as schema from '../db/schema'
import { checkpointInBackground, WAL_AUTOCHECKPOINT_PAGES } from './wal-checkpoint'
import { beginWritesWithoutStuckStatements } from './write-begin'

/** How long a write waits for another process's hold on the write lock. */
const BUSY_TIMEOUT_MS = 5000

export type Db = ReturnType<typeof drizzle<typeof schema>>

let ready: Promise<Db> | undefined

export function databaseUrl(): string {
  return process.env.DATABASE_URL || useRuntimeConfig().databaseUrl || 'file:.data/fourfold.db'
}

function migrationsFolder(): string {
  const configured = process.env.MIGRATIONS_DIR || useRuntimeConfig().migrationsDir
  const candidates = [
    configured,
    // The build copies drizzle/ beside .output/server/index.mjs.
    process.argv[1] ? resolve(dirname(process.argv[1]), 'drizzle') : '',
    resolve(process.cwd(), 'drizzle'),
  ].filter(Boolean) as string[]
  const found = candidates.find(dir => existsSync(resolve(dir, 'meta/_journal.json')))
  if (!found) throw new Error(`No migrations found; looked in ${candidates.join(', ')}. Set MIGRATIONS_DIR.`)
  return found
}

async function open(): Promise<Db> {
  const url = databaseUrl()
  if (url.startsWith('file:')) {
    const { mkdir } = await import('node:fs/promises')
    const path = url.slice('file:'.length).split('?')[0]!
    if (path && path !== ':memory:') await mkdir(dirname(resolve(path)), { recursive: true })
  }
  const client = createClient({
    url,
    authToken: process.env.DATABASE_AUTH_TOKEN || useRuntimeConfig().databaseAuthToken || undefined,
    // Busy timeout (ms) for every pooled connection: waits for another process's write.
    timeout: BUSY_TIMEOUT_MS,
  })
  if (url.startsWith('file:')) {
    // WAL is a property of the database file, so one connection setting it is enough.
    await client.execute('PRAGMA journal_mode = WAL')
    const path = url.slice('file:'.length).split('?')[0]!
    if (path && path !== ':memory:') {
      // Checkpoints off the event loop (wal-checkpoint.ts); this connection is the one plain
      // statements reuse most (the pool hands back the last one returned).
      await client.execute(`PRAGMA wal_autocheckpoint = ${WAL_AUTOCHECKPOINT_PAGES}`)
      checkpointInBackground(client, path)
      // Another process's hold on the write lock is waited for off the event loop, and a write
      // that gives up leaves no statement stuck on a pooled connection (write-begin.ts).
      beginWritesWithoutStuckStatements(client, BUSY_TIMEOUT_MS)
      // The write queue's probe asks about this file before each write (database-busy.ts).
      probeWriteLockOf(url)
    }
  }
  const db = drizzle(client, { schema })
  await migrate(db, { migrationsFolder: migrationsFolder() })
  return db
}

export function useDb(): Promise<Db> {
  ready ??= open().catch((error) => {
    ready = undefined
    throw error
  })
  return ready
}

/** True when a write broke a UNIQUE index (two people taking the same name or address at once). */
export function isUniqueViolation(error: unknown): boolean {
  const text = `${(error as Error)?.message ?? ''} ${String((error as { cause?: unknown })?.cause ?? '')}`
  return text.includes('UNIQUE constraint failed')
}
