// Shared by the command-line scripts: open the configured database and apply migrations,
// the same way the server does at start (server/utils/db.ts).
import { mkdirSync } from 'node:fs'
import { dirname, resolve } from 'node:path'
import { fileURLToPath } from 'node:url'
import { createClient } from '@libsql/client'
import { drizzle } from 'drizzle-orm/libsql'
import { migrate } from 'drizzle-orm/libsql/migrator'

export const root = resolve(dirname(fileURLToPath(import.meta.url)), '..')

export function databaseUrl() {
  return process.env.DATABASE_URL || process.env.NUXT_DATABASE_URL || 'file:.data/fourfold.db'
}

export async function openMigratedDb(schema) {
  const url = databaseUrl()
  if (url.startsWith('file:')) {
    const path = url.slice(5).split('?')[0]
    if (path && path !== ':memory:') mkdirSync(dirname(resolve(path)), { recursive: true })
  }
  const client = createClient({ url, authToken: process.env.DATABASE_AUTH_TOKEN || undefined, timeout: 5000 })
  if (url.startsWith('file:')) await client.execute('PRAGMA journal_mode = WAL')
  const db = drizzle(client, { schema })
  await migrate(db, { migrationsFolder: resolve(root, 'drizzle') })
  return { db, client, url }
}
