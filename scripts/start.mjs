// npm start — the demo in one command: build, migrate, seed the demo organisation when the
// database is empty, serve on http://localhost:3000 and print the demo sign-ins.
import { spawn, spawnSync } from 'node:child_process'
import { ensureDevSessionPassword } from './session-secret.mjs'
import { demoAccounts, demoPassword, seedIfEmpty } from './seed.mjs'
import { root } from './db.mjs'

const port = process.env.PORT || '3000'
const env = {
  ...process.env,
  NODE_ENV: 'production',
  PORT: port,
  NUXT_APP_URL: process.env.NUXT_APP_URL || `http://localhost:${port}`,
  // The demo captures mail locally and shows it at /dev/mail.
  MAIL_CAPTURE_PAGE: process.env.MAIL_CAPTURE_PAGE || (process.env.SMTP_URL ? 'false' : 'true'),
  // Plain http on a LAN address drops Secure cookies; set it to true behind HTTPS.
  NUXT_SESSION_COOKIE_SECURE: process.env.NUXT_SESSION_COOKIE_SECURE || 'false',
}
env.NUXT_SESSION_PASSWORD = ensureDevSessionPassword(root)

if (process.env.SKIP_BUILD !== '1') {
  const build = spawnSync('npx', ['nuxt', 'build'], { cwd: root, stdio: 'inherit', env: { ...env, NODE_ENV: 'production' } })
  if (build.status !== 0) process.exit(build.status ?? 1)
}

const { seeded, url } = await seedIfEmpty()
console.log(seeded ? `Seeded the demo organisation into ${url}.` : `Using ${url}.`)

const server = spawn(process.execPath, ['.output/server/index.mjs'], { cwd: root, stdio: 'inherit', env })
for (const signal of ['SIGINT', 'SIGTERM']) process.on(signal, () => server.kill(signal))
server.on('exit', code => process.exit(code ?? 0))

const base = `http://localhost:${port}`
for (let i = 0; i < 120; i++) {
  try {
    const res = await fetch(`${base}/api/health`)
    if (res.ok) break
  }
  catch { /* not listening yet */ }
  await new Promise(r => setTimeout(r, 500))
}
const password = demoPassword()
console.log(`\nFourfold is running at ${base}\nDemo sign-ins (password: ${password}):`)
for (const a of demoAccounts()) console.log(`  ${a.role.padEnd(8)} ${a.email}`)
if (env.MAIL_CAPTURE_PAGE === 'true') console.log(`Captured mail (invites, password resets): ${base}/dev/mail`)
