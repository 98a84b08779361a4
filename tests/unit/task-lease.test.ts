// The lease a scheduled job takes before it runs (server/utils/task-lease.ts): against a real SQLite
// file with the committed migrations, through separate connections, and from separate processes.
import { spawn } from 'node:child_process'
import { mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join, resolve } from 'node:path'
import { createClient, type Client } from '@libsql/client'
import { drizzle } from 'drizzle-orm/libsql'
import { migrate } from 'drizzle-orm/libsql/migrator'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { releaseLease, renewLease, takeLease } from '../../server/utils/task-lease'

let dir: string
let url: string
let a: Client
let b: Client

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'fourfold-lease-'))
  url = `file:${join(dir, 'lease.db')}`
  a = createClient({ url, timeout: 5000 })
  await a.execute('PRAGMA journal_mode = WAL')
  await migrate(drizzle(a), { migrationsFolder: resolve('drizzle') })
  b = createClient({ url, timeout: 5000 })
})
afterAll(async () => {
  a?.close()
  b?.close()
  await rm(dir, { recursive: true, force: true })
})

const holderOf = async (name: string) => (await a.execute({ sql: 'select holder, expires_at from task_leases where name = ?', args: [name] })).rows[0]

describe('task lease', () => {
  it('goes to the first taker; a second connection finds it held until it is released', async () => {
    expect(await takeLease(a, 'job-1', 'first', 60_000)).toBe(true)
    expect(await takeLease(b, 'job-1', 'second', 60_000)).toBe(false)
    // Not re-entrant either: the same holder asking again while it holds it is refused too.
    expect(await takeLease(a, 'job-1', 'first', 60_000)).toBe(false)
    expect((await holderOf('job-1'))!.holder).toBe('first')

    // Only the holder can give it back.
    await releaseLease(b, 'job-1', 'second')
    expect((await holderOf('job-1'))!.holder).toBe('first')
    await releaseLease(a, 'job-1', 'first')
    expect(await holderOf('job-1')).toBeUndefined()
    expect(await takeLease(b, 'job-1', 'second', 60_000)).toBe(true)
  })

  it('can be taken over once it has expired (a holder that died), and then the old holder cannot renew or release it', async () => {
    expect(await takeLease(a, 'job-2', 'crashed', 60_000)).toBe(true)
    // Time moves on: the stored expiry is put in the past, as after a crash long ago.
    await a.execute({ sql: 'update task_leases set expires_at = expires_at - 120000 where name = ?', args: ['job-2'] })
    expect(await takeLease(b, 'job-2', 'next', 60_000)).toBe(true)
    expect((await holderOf('job-2'))!.holder).toBe('next')
    expect(await renewLease(a, 'job-2', 'crashed', 60_000)).toBe(false)
    await releaseLease(a, 'job-2', 'crashed')
    expect((await holderOf('job-2'))!.holder).toBe('next')
  })

  it('renewing moves the expiry on for the holder only', async () => {
    expect(await takeLease(a, 'job-3', 'runner', 1_000)).toBe(true)
    const before = Number((await holderOf('job-3'))!.expires_at)
    expect(await renewLease(a, 'job-3', 'runner', 600_000)).toBe(true)
    expect(Number((await holderOf('job-3'))!.expires_at)).toBeGreaterThan(before + 500_000)
    expect(await renewLease(b, 'job-3', 'someone-else', 600_000)).toBe(false)
  })

  it('keeps separate jobs apart', async () => {
    expect(await takeLease(a, 'job-4a', 'x', 60_000)).toBe(true)
    expect(await takeLease(b, 'job-4b', 'y', 60_000)).toBe(true)
  })

  it('goes to exactly one of several processes that ask at the same moment', async () => {
    const racers = Array.from({ length: 5 }, (_, i) => {
      const child = spawn(process.execPath, ['--import', 'tsx', resolve('tests/support/lease-racer.ts'), url, 'job-race', `racer-${i}`, '60000'], { stdio: ['pipe', 'pipe', 'pipe'] })
      let out = ''
      let err = ''
      child.stderr.on('data', (d: Buffer) => (err += d.toString()))
      const ready = new Promise<void>((ok, fail) => {
        child.stdout.on('data', (d: Buffer) => {
          out += d.toString()
          if (out.includes('ready\n')) ok()
        })
        child.once('exit', code => fail(new Error(`racer exited ${code} before it was ready: ${err}`)))
      })
      const done = new Promise<{ holder: string, won: boolean }>((ok, fail) => {
        child.once('exit', (code) => {
          const line = out.split('\n').find(l => l.startsWith('{'))
          if (code === 0 && line) ok(JSON.parse(line))
          else fail(new Error(`racer exited ${code}: ${err}`))
        })
      })
      return { child, ready, done }
    })
    await Promise.all(racers.map(r => r.ready))
    for (const r of racers) r.child.stdin.write('go\n')
    const results = await Promise.all(racers.map(r => r.done))
    const winners = results.filter(r => r.won)
    expect(winners).toHaveLength(1)
    expect((await holderOf('job-race'))!.holder).toBe(winners[0]!.holder)
  }, 60_000)
})
