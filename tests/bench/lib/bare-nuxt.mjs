// A Nuxt app with one page and nothing else, built in a temporary folder with the project's own
// installed nuxt: the yardstick of "the runner loads at most 2× a bare Nuxt page"
// (tests/bench/runner.bench.mjs measures it, tests/budgets/js-size.mjs enforces it).
import { spawn } from 'node:child_process'
import { readFileSync } from 'node:fs'
import { mkdir, symlink, writeFile } from 'node:fs/promises'
import { join } from 'node:path'
import { BUILD_LOCK, buildLockHeld, root } from './build.mjs'
import { makeTempDir, trackChild, untrackChild } from './cleanup.mjs'

/** The bare page's only content, to wait for. */
export const BARE_HEADING = 'A bare page'
const BUILD_TIMEOUT_MS = 15 * 60_000

/**
 * Builds the bare app and returns its output folder and a line saying how. With `lock` the build
 * waits for the checkout's build lock (one `nuxt build` at a time on this machine, so the
 * measurements of others are not disturbed) unless the caller holds it (FOURFOLD_BUILD_LOCK_HELD).
 */
export async function buildBareNuxt({ lock = true, log = console.error } = {}) {
  const dir = await makeTempDir('fourfold-bare-nuxt-')
  await symlink(join(root, 'node_modules'), join(dir, 'node_modules'), 'dir')
  await writeFile(join(dir, 'package.json'), JSON.stringify({ name: 'bare', private: true, type: 'module' }))
  // buildDir and the Vite cache stay in the temporary folder: the production default would be
  // node_modules/.cache, which here is the project's own.
  await writeFile(join(dir, 'nuxt.config.ts'), `export default defineNuxtConfig({
  compatibilityDate: '2026-11-01',
  devtools: { enabled: false },
  buildDir: ${JSON.stringify(join(dir, '.nuxt'))},
  vite: { cacheDir: ${JSON.stringify(join(dir, '.vite'))} },
})
`)
  await mkdir(join(dir, 'app/pages'), { recursive: true })
  await writeFile(join(dir, 'app/pages/index.vue'), `<template>\n  <h1>${BARE_HEADING}</h1>\n</template>\n`)
  const started = Date.now()
  const locked = lock && !buildLockHeld()
  log(`Building the bare Nuxt app${locked ? ` under ${BUILD_LOCK}` : ''} …`)
  const [command, args] = locked
    ? ['flock', ['-w', String(BUILD_TIMEOUT_MS / 1000), BUILD_LOCK, 'npx', 'nuxt', 'build']]
    : ['npx', ['nuxt', 'build']]
  // Output goes to stderr so stdout stays the report.
  const child = trackChild(spawn(command, args, { cwd: dir, env: { ...process.env, NODE_ENV: 'production' }, stdio: ['ignore', process.stderr, process.stderr] }))
  const timer = setTimeout(() => child.kill('SIGTERM'), 2 * BUILD_TIMEOUT_MS)
  const code = await new Promise(r => child.once('exit', (c, s) => r(c ?? s)))
  clearTimeout(timer)
  untrackChild(child)
  if (code !== 0) throw new Error(`the bare Nuxt build failed (${code})`)
  const version = JSON.parse(readFileSync(join(root, 'node_modules/nuxt/package.json'), 'utf8')).version
  return { output: join(dir, '.output'), how: `nuxt ${version}, ${Math.round((Date.now() - started) / 1000)} s` }
}
