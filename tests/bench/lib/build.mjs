// The built server a benchmark runs: the existing .output (or a fresh `npx nuxt build`), copied
// to a private folder so a rebuild in the shared tree cannot pull files out from under it.
import { spawn, spawnSync } from 'node:child_process'
import { existsSync, statSync } from 'node:fs'
import { cp } from 'node:fs/promises'
import { dirname, join, resolve } from 'node:path'
import { fileURLToPath } from 'node:url'
import { makeTempDir, trackChild, untrackChild } from './cleanup.mjs'

export const root = resolve(dirname(fileURLToPath(import.meta.url)), '../../..')
const serverEntry = join(root, '.output/server/index.mjs')
export const BUILD_LOCK = '/tmp/fourfold-build.lock'
const BUILD_TIMEOUT_MS = 15 * 60_000

/**
 * FOURFOLD_BUILD_LOCK_HELD=1: the caller holds the build lock for the whole run
 * (`flock /tmp/fourfold-build.lock env FOURFOLD_BUILD_LOCK_HELD=1 npm run bench:…`), so no other
 * build or browser test runs beside the measurements. Taking the lock again from a child would
 * wait for ever, so the commands then run without flock — after checking that the lock really is
 * held by someone (flock -n fails), so the setting cannot quietly drop the protection.
 */
export function buildLockHeld() {
  if (process.env.FOURFOLD_BUILD_LOCK_HELD !== '1') return false
  if (spawnSync('flock', ['-n', BUILD_LOCK, 'true']).status === 0) {
    throw new Error(`FOURFOLD_BUILD_LOCK_HELD=1 but nobody holds ${BUILD_LOCK}; run the benchmark under flock ${BUILD_LOCK} …`)
  }
  return true
}

// With `lock`, the command waits for the checkout's build lock first (only one `nuxt build` at a
// time, and never a copy of a half-written .output), giving up after the build timeout.
function locked(command, lock) {
  return lock && !buildLockHeld() ? ['flock', ['-w', String(BUILD_TIMEOUT_MS / 1000), BUILD_LOCK, ...command]] : [command[0], command.slice(1)]
}

async function run(command, lock, what) {
  const [file, args] = locked(command, lock)
  // Output goes to stderr so stdout stays the report.
  const child = trackChild(spawn(file, args, { cwd: root, stdio: ['ignore', process.stderr, process.stderr] }))
  // Waiting for the lock has its own limit (flock -w), so the command's is doubled then.
  const timer = setTimeout(() => child.kill('SIGTERM'), (lock ? 2 : 1) * BUILD_TIMEOUT_MS)
  const code = await new Promise(r => child.once('exit', (c, s) => r(c ?? s)))
  clearTimeout(timer)
  untrackChild(child)
  if (code !== 0) throw new Error(`${what} failed (${code})`)
}

/** Makes sure .output exists (building it when missing or when forceBuild); says which build is used. */
export async function ensureBuild({ forceBuild = false, lock = false, log = console.log } = {}) {
  if (existsSync(serverEntry) && !forceBuild) {
    return `existing .output (built ${statSync(serverEntry).mtime.toISOString()}; pass --build to rebuild)`
  }
  const reason = forceBuild ? '--build given' : '.output/server/index.mjs missing'
  log(`Building (${reason}): npx nuxt build${lock ? ` under ${BUILD_LOCK}` : ''} …`)
  const started = Date.now()
  await run(['npx', 'nuxt', 'build'], lock, 'npx nuxt build')
  if (!existsSync(serverEntry)) throw new Error('build finished but .output/server/index.mjs is missing')
  return `fresh build (${reason}), ${Math.round((Date.now() - started) / 1000)} s`
}

/** Copies .output (or another build's output folder) to a private temporary folder and returns the copy's server entry. */
export async function snapshotBuild({ lock = false, from = join(root, '.output') } = {}) {
  const dir = await makeTempDir('fourfold-bench-build-')
  if (lock) await run(['cp', '-R', from, join(dir, 'output')], true, 'copying .output')
  else await cp(from, join(dir, 'output'), { recursive: true })
  const entry = join(dir, 'output/server/index.mjs')
  if (!existsSync(entry) || !existsSync(join(dir, 'output/nitro.json'))) {
    throw new Error('the copy of .output is incomplete (was it being rebuilt?); run again, or with --build')
  }
  return entry
}
