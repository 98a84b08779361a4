// Snapshots of a test server's SQLite file, read through one connection that cannot write
// (PRAGMA query_only), to prove that a refused request changed nothing. A snapshot is every row of
// the tables in scope as JSON text per table, so two snapshots compare as plain strings.
import { createClient, type Client } from '@libsql/client'

export type Snapshot = Record<string, string>

/**
 * Left out of every snapshot: sign_in_failures, because counting failed sign-ins is its purpose (the
 * throttle); task_leases, the scheduler's; mail_outbox, whose rows an accepted request queues and a
 * background delivery deletes a moment later, so they come and go between any two snapshots
 * (that a refused request sends no mail is checked on the captured mail, tests/e2e/hostile-mail.test.ts).
 */
export const UNSNAPSHOTTED = ['sign_in_failures', 'task_leases', 'mail_outbox'] as const

export class SnapshotReader {
  private constructor(private readonly db: Client, private readonly tables: Array<{ name: string, scoped: boolean }>) {}

  /** Opens the file read-only; call after the server has migrated it (startServer waits for that). */
  static async open(databaseUrl: string): Promise<SnapshotReader> {
    // One connection, so the pragma holds for every statement.
    const db = createClient({ url: databaseUrl, concurrency: 1, timeout: 5000 })
    await db.execute('PRAGMA query_only = 1')
    const names = (await db.execute(`select name from sqlite_master where type = 'table' and name not like 'sqlite_%' and name not like '%drizzle%' order by name`)).rows.map(r => String(r.name))
    const tables = []
    for (const name of names) {
      if ((UNSNAPSHOTTED as readonly string[]).includes(name)) continue
      const columns = (await db.execute(`pragma table_info("${name}")`)).rows.map(r => String(r.name))
      tables.push({ name, scoped: columns.includes('organisation_id') })
    }
    return new SnapshotReader(db, tables)
  }

  private async rows(sql: string, args: string[] = []): Promise<string> {
    return JSON.stringify((await this.db.execute({ sql, args })).rows)
  }

  /**
   * SQLite's data_version: it changes whenever another connection (the server) has committed a
   * change to the file since this connection last asked. Equal readings mean nothing changed, so a
   * snapshot can be skipped; a different one may be only a checkpoint, so compare snapshots then.
   */
  async version(): Promise<number> {
    return Number((await this.db.execute('PRAGMA data_version')).rows[0]![0])
  }

  /** Rows of one read-only statement. */
  async query(sql: string, args: Array<string | number | null> = []): Promise<Array<Record<string, unknown>>> {
    return (await this.db.execute({ sql, args })).rows as unknown as Array<Record<string, unknown>>
  }

  /** Tables with an id column. */
  get tableNames(): string[] {
    return this.tables.map(t => t.name)
  }

  /** Everything that belongs to one organisation: its row, every organisation-scoped table, its members' accounts and reset tokens. */
  async organisation(organisationId: string): Promise<Snapshot> {
    const snapshot: Snapshot = {}
    const members = 'select user_id from memberships where organisation_id = ?'
    snapshot.organisations = await this.rows('select * from organisations where id = ?', [organisationId])
    snapshot.users = await this.rows(`select * from users where id in (${members}) order by id`, [organisationId])
    snapshot.password_resets = await this.rows(`select * from password_resets where user_id in (${members}) order by id`, [organisationId])
    for (const table of this.tables.filter(t => t.scoped)) {
      snapshot[table.name] = await this.rows(`select * from "${table.name}" where organisation_id = ? order by rowid`, [organisationId])
    }
    return snapshot
  }

  /** Every row of every table (but UNSNAPSHOTTED). */
  async everything(): Promise<Snapshot> {
    const snapshot: Snapshot = {}
    for (const table of this.tables) snapshot[table.name] = await this.rows(`select * from "${table.name}" order by rowid`)
    return snapshot
  }

  close() {
    this.db.close()
  }
}

/** The tables whose rows differ between two snapshots. */
export function changedTables(before: Snapshot, after: Snapshot): string[] {
  return [...new Set([...Object.keys(before), ...Object.keys(after)])].filter(t => before[t] !== after[t]).sort()
}
