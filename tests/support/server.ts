// Starts the built server (.output) on its own port, SQLite file and mail folder,
// so each test file gets a fresh, isolated Fourfold over real HTTP.
import { spawn, type ChildProcess } from 'node:child_process'
import { randomBytes } from 'node:crypto'
import { mkdtemp, readdir, readFile, rm } from 'node:fs/promises'
import { createServer } from 'node:net'
import { tmpdir } from 'node:os'
import { join, resolve } from 'node:path'

export interface CapturedMail { id: string, to: string[], subject: string, text: string, html: string, links: string[], envelope: { from: string, to: string[] } }

export interface TestServer {
  url: string
  dir: string
  databaseUrl: string
  process: ChildProcess
  output: () => string
  mails: () => Promise<CapturedMail[]>
  waitForMail: (match: (m: CapturedMail) => boolean, timeoutMs?: number) => Promise<CapturedMail>
  stop: () => Promise<void>
}

export async function freePort(): Promise<number> {
  return new Promise((resolvePort, reject) => {
    const srv = createServer()
    srv.once('error', reject)
    srv.listen(0, '127.0.0.1', () => {
      const address = srv.address()
      const port = typeof address === 'object' && address ? address.port : 0
      srv.close(() => resolvePort(port))
    })
  })
}

export async function startServer(options: { env?: Record<string, string | undefined>, dir?: string } = {}): Promise<TestServer> {
  const port = await freePort()
  const dir = options.dir ?? await mkdtemp(join(tmpdir(), 'fourfold-test-'))
  const url = `http://127.0.0.1:${port}`
  const databaseUrl = `file:${join(dir, 'fourfold.db')}`
  const mailDir = join(dir, 'mail')
  let log = ''
  const env: Record<string, string | undefined> = {
    ...process.env,
    NODE_ENV: 'production',
    PORT: String(port),
    HOST: '127.0.0.1',
    DATABASE_URL: databaseUrl,
    MAIL_DIR: mailDir,
    UPLOAD_DIR: join(dir, 'uploads'),
    SMTP_URL: '',
    MAIL_CAPTURE_PAGE: 'true',
    NUXT_APP_URL: url,
    NUXT_SESSION_PASSWORD: randomBytes(32).toString('hex'),
    NUXT_SESSION_COOKIE_SECURE: 'false',
    // Tests give each scenario its own address through X-Forwarded-For.
    TRUST_PROXY: '1',
    ...options.env,
  }
  // A key given as undefined means: leave it unset, so the build's default applies.
  // FOURFOLD_OUTPUT: a private copy of a build, so a rebuild in the shared tree cannot pull the
  // files from under a running test (DEVELOPERS.md "Running things").
  const child = spawn(process.execPath, [resolve(process.env.FOURFOLD_OUTPUT || '.output', 'server/index.mjs')], {
    env: Object.fromEntries(Object.entries(env).filter(([, value]) => value !== undefined)) as NodeJS.ProcessEnv,
    stdio: ['ignore', 'pipe', 'pipe'],
  })
  child.stdout!.on('data', (d: Buffer) => (log += d.toString()))
  child.stderr!.on('data', (d: Buffer) => (log += d.toString()))

  const deadline = Date.now() + 30_000
  for (;;) {
    if (child.exitCode !== null) throw new Error(`server exited early (${child.exitCode}):\n${log}`)
    try {
      const res = await fetch(`${url}/api/health`)
      if (res.ok) break
    }
    catch { /* not listening yet */ }
    if (Date.now() > deadline) throw new Error(`server did not answer /api/health in 30 s:\n${log}`)
    await new Promise(r => setTimeout(r, 150))
  }

  async function mails(): Promise<CapturedMail[]> {
    const names = await readdir(mailDir).catch(() => [] as string[])
    const list = await Promise.all(names.filter(n => n.endsWith('.json')).map(async n => JSON.parse(await readFile(join(mailDir, n), 'utf8')) as CapturedMail))
    return list.sort((a, b) => a.id.localeCompare(b.id))
  }

  return {
    url,
    dir,
    databaseUrl,
    process: child,
    output: () => log,
    mails,
    async waitForMail(match, timeoutMs = 10_000) {
      const end = Date.now() + timeoutMs
      for (;;) {
        const found = (await mails()).find(match)
        if (found) return found
        if (Date.now() > end) throw new Error('no matching mail was captured')
        await new Promise(r => setTimeout(r, 100))
      }
    },
    async stop() {
      if (child.exitCode === null) {
        const exited = new Promise(r => child.once('exit', r))
        child.kill('SIGTERM')
        await Promise.race([exited, new Promise(r => setTimeout(r, 5000))])
        if (child.exitCode === null) child.kill('SIGKILL')
      }
      if (!options.dir) await rm(dir, { recursive: true, force: true })
    },
  }
}
