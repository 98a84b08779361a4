// Leases for scheduled jobs (DESIGN.md §5: nothing may assume one process). Before a job runs,
// its instance takes the job's row in task_leases in one statement; every other instance (or a
// second run in this process) finds the row held and skips. The row names its holder and expires,
// so a crashed holder blocks the job only until the expiry. Times come from the database's clock,
// not the process's, so two machines with skewed clocks still agree who holds it.
import { hostname } from 'node:os'
import { randomUUID } from 'node:crypto'
import type { Client } from '@libsql/client'

/** This process run's name in task_leases.holder: machine, process id and a random part. */
const PROCESS_HOLDER = `${hostname()}:${process.pid}:${randomUUID().slice(0, 8)}`

const DB_NOW = 'CAST(unixepoch(\'subsec\') * 1000 AS INTEGER)'

/**
 * Takes the lease `name` for `ttlMs` when nobody holds it or the last hold has expired, in one
 * write: the insert creates the row, or the upsert takes it over only when it has expired.
 * The row comes back (RETURNING) only when this call took it. True when taken.
 */
export async function takeLease(client: Pick<Client, 'execute'>, name: string, holder: string, ttlMs: number): Promise<boolean> {
  const result = await client.execute({
    sql: `INSERT INTO task_leases (name, holder, expires_at) VALUES (?, ?, ${DB_NOW} + ?)
          ON CONFLICT (name) DO UPDATE SET holder = excluded.holder, expires_at = excluded.expires_at
          WHERE task_leases.expires_at <= ${DB_NOW}
          RETURNING holder`,
    args: [name, holder, Math.round(ttlMs)],
  })
  return result.rows.length === 1 && result.rows[0]!.holder === holder
}

/** Pushes the expiry on while the work runs. False when the lease is no longer ours. */
export async function renewLease(client: Pick<Client, 'execute'>, name: string, holder: string, ttlMs: number): Promise<boolean> {
  const result = await client.execute({
    sql: `UPDATE task_leases SET expires_at = ${DB_NOW} + ? WHERE name = ? AND holder = ? RETURNING holder`,
    args: [Math.round(ttlMs), name, holder],
  })
  return result.rows.length === 1
}

/** Gives the lease back at once (only if still ours), so the next run need not wait for the expiry. */
export async function releaseLease(client: Pick<Client, 'execute'>, name: string, holder: string): Promise<void> {
  await client.execute({ sql: 'DELETE FROM task_leases WHERE name = ? AND holder = ?', args: [name, holder] })
}

export type LeaseOutcome<T> = { ran: true, result: T, holder: string } | { ran: false }

/**
 * Runs `work` only if this process takes the lease `name`; otherwise answers `{ ran: false }` at
 * once. While the work runs the lease is renewed every third of its time to live, and afterwards
 * it is released, also when the work throws. If this process dies, the lease expires by itself.
 * Each call holds under its own id (the process's id plus a random part), so a late release can
 * never free a lease that someone took over after an expiry.
 */
export async function withLease<T>(name: string, ttlMs: number, work: () => Promise<T>): Promise<LeaseOutcome<T>> {
  const client = (await useDb()).$client
  const holder = `${PROCESS_HOLDER}:${randomUUID().slice(0, 8)}`
  if (!await serialiseWrite(() => takeLease(client, name, holder, ttlMs))) return { ran: false }
  const renew = setInterval(() => {
    serialiseWrite(() => renewLease(client, name, holder, ttlMs))
      .then((held) => {
        if (!held) console.warn(`[fourfold] lease "${name}" expired while its work was still running`)
      })
      .catch(error => console.error(`[fourfold] could not renew lease "${name}":`, error))
  }, Math.max(1000, Math.floor(ttlMs / 3)))
  renew.unref()
  try {
    return { ran: true, result: await work(), holder }
  }
  finally {
    clearInterval(renew)
    await serialiseWrite(() => releaseLease(client, name, holder))
      .catch(error => console.error(`[fourfold] could not release lease "${name}"; it expires by itself:`, error))
  }
}
