// Two processes writing back to back to one SQLite file (server/utils/write-turns.ts, with
// write-lock.ts and write-begin.ts as the server runs them): both get their writes in, none is
// refused. The control is two processes that take no turns — each begins its next write right
// after its commit, waiting in SQLite's busy handler, as the app did before: one of them then
// hardly gets in, which is what the turns are for. Real child processes
// (tests/support/write-turn-racer.ts).
import { spawn } from 'node:child_process'
import { mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join, resolve } from 'node:path'
import { createClient } from '@libsql/client'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'

/** A wait for the lock this long means the other process kept it for 50 of its 20 ms writes. */
const UNFAIR_WAIT_MS = 1000

interface Outcome { name: string, mode: string, commits: number, refused: number, longestWaitMs: number }

let dir: string
let url: string
let runs = 0

beforeAll(async () => {
  dir = await mkdtemp(join(tmpdir(), 'fourfold-write-turns-'))
  url = `file:${join(dir, 'turns.db')}`
  const setup = createClient({ url })
  await setup.execute('PRAGMA journal_mode = WAL')
  await setup.execute('create table __drizzle_migrations (id integer primary key)')
  await setup.execute('create table marks (id text primary key)')
  setup.close()
})
afterAll(async () => {
  if (dir) await rm(dir, { recursive: true, force: true })
})

/** Starts the racers, lets them go together for `durationMs`, and returns what each did. */
async function race(modes: Array<'polite' | 'greedy'>, durationMs: number, holdMs: number): Promise<Outcome[]> {
  runs += 1
  const racers = modes.map((mode, i) => {
    const child = spawn(process.execPath, ['--import', 'tsx', resolve('tests/support/write-turn-racer.ts'), url, mode, `${runs}-${mode}-${i}`, String(durationMs), String(holdMs)], {
      stdio: ['pipe', 'pipe', 'pipe'],
      env: { ...process.env, DATABASE_URL: url },
    })
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
    const done = new Promise<Outcome>((ok, fail) => {
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
  return Promise.all(racers.map(r => r.done))
}

describe('two processes writing back to back to one file', () => {
  it('take turns: each gets a fair share of the writes, none is refused', async () => {
    const [a, b] = await race(['polite', 'polite'], 4000, 20)
    const total = a!.commits + b!.commits
    console.info(`[write-turns] two polite processes: ${a!.commits} + ${b!.commits} writes, longest waits ${a!.longestWaitMs} / ${b!.longestWaitMs} ms`)
    expect(a!.refused + b!.refused).toBe(0)
    // 4 s at 20 ms a write is at most 200 in all; a fair share is about half each.
    expect(total).toBeGreaterThan(50)
    expect(Math.min(a!.commits, b!.commits)).toBeGreaterThan(total * 0.3)
    // Nobody waits more than a few of the other's writes, let alone the busy timeout (5 s).
    expect(Math.max(a!.longestWaitMs, b!.longestWaitMs)).toBeLessThan(UNFAIR_WAIT_MS)
  }, 60_000)

  it('control: two processes that take no turns (a plain BEGIN IMMEDIATE right after each commit, as before): one waits a second or more at times, or hardly gets in', async () => {
    const [a, b] = await race(['greedy', 'greedy'], 4000, 20)
    console.info(`[write-turns] two processes without turns: ${a!.commits} + ${b!.commits} writes, longest waits ${a!.longestWaitMs} / ${b!.longestWaitMs} ms`)
    // Waiting in SQLite's busy handler, a process only gets in when its next try falls between two of
    // the other's writes: it waits a second or more at times, or hardly gets in at all.
    const unfair = Math.max(a!.longestWaitMs, b!.longestWaitMs) >= UNFAIR_WAIT_MS || Math.min(a!.commits, b!.commits) < (a!.commits + b!.commits) * 0.15
    expect(unfair).toBe(true)
  }, 60_000)
})
