// Starts the built server (from the private copy) on its own port, SQLite file and mail folder,
// on 127.0.0.1 only; every server started is stopped by cleanUp().
import { spawn } from 'node:child_process'
import { randomBytes } from 'node:crypto'
import { createServer } from 'node:net'
import { join } from 'node:path'
import { makeTempDir, sleep, trackChild } from './cleanup.mjs'

const HEALTH_TIMEOUT_MS = 60_000

/** Every server started, for the failure report. */
export const servers = []

export async function freePort() {
  return new Promise((resolvePort, reject) => {
    const srv = createServer()
    srv.once('error', reject)
    srv.listen(0, '127.0.0.1', () => {
      const address = srv.address()
      srv.close(() => resolvePort(address.port))
    })
  })
}

/**
 * Starts `entry` with a fresh database. Hash settings come only from the build's default or from
 * extraEnv, never from the shell; `nodeArgs` go before the entry (e.g. --cpu-prof). `health` is the
 * path that answers once the server is up (a bare Nuxt app has no /api/health: '/' there).
 */
export async function startServer(entry, label, extraEnv = {}, { nodeArgs = [], health = '/api/health' } = {}) {
  const dir = await makeTempDir('fourfold-bench-')
  const port = await freePort()
  const url = `http://127.0.0.1:${port}`
  const databaseUrl = `file:${join(dir, 'fourfold.db')}`
  const mailDir = join(dir, 'mail')
  let output = ''
  const inherited = Object.fromEntries(Object.entries(process.env).filter(([key]) => !key.startsWith('NUXT_HASH_')))
  const child = trackChild(spawn(process.execPath, [...nodeArgs, entry], {
    cwd: dir,
    env: {
      ...inherited,
      NODE_ENV: 'production',
      PORT: String(port),
      HOST: '127.0.0.1',
      DATABASE_URL: databaseUrl,
      MAIL_DIR: mailDir,
      SMTP_URL: '',
      NUXT_APP_URL: url,
      NUXT_SESSION_PASSWORD: randomBytes(32).toString('hex'),
      NUXT_SESSION_COOKIE_SECURE: 'false',
      // Each request names its own address through X-Forwarded-For.
      TRUST_PROXY: '1',
      ...extraEnv,
    },
    stdio: ['ignore', 'pipe', 'pipe'],
  }))
  // Keep only the tail of the server's output, for error messages.
  const keep = d => (output = (output + d.toString()).slice(-20_000))
  child.stdout.on('data', keep)
  child.stderr.on('data', keep)

  const deadline = Date.now() + HEALTH_TIMEOUT_MS
  for (let attempt = 0; attempt < 1000; attempt++) {
    if (child.exitCode !== null) throw new Error(`${label} server exited early (${child.exitCode}):\n${output}`)
    try {
      const res = await fetch(`${url}${health}`, { signal: AbortSignal.timeout(2000) })
      if (res.ok) {
        const server = { label, url, dir, databaseUrl, mailDir, child, output: () => output }
        servers.push(server)
        return server
      }
    }
    catch { /* not listening yet */ }
    if (Date.now() > deadline) break
    await sleep(150)
  }
  throw new Error(`${label} server did not answer ${health} within ${HEALTH_TIMEOUT_MS / 1000} s:\n${output}`)
}

/** The end of every server's output, for a failed run. */
export function reportServers() {
  for (const server of servers) {
    const state = server.child.exitCode === null && server.child.signalCode === null ? 'running' : `exited (${server.child.exitCode ?? server.child.signalCode})`
    console.error(`\n--- ${server.label} server, ${state}; end of its output:\n${server.output().slice(-3000)}`)
  }
}
