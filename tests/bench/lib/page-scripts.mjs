// The JavaScript a page really loads: every script its load requests in Chromium, read back from
// the build's public folder. Used by the runner benchmark and the JS budgets (tests/budgets/js-size.mjs).
import { existsSync, readFileSync } from 'node:fs'
import { join } from 'node:path'
import { gzipSync } from 'node:zlib'
import { chromium } from 'playwright-core'
import { sleep } from './cleanup.mjs'

/** Debian's Chromium, headless, as every browser test here runs it (no browser is downloaded). */
export function launchChromium() {
  return chromium.launch({
    executablePath: process.env.CHROMIUM_PATH || '/usr/bin/chromium',
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
  })
}

/**
 * Every script a load of `path` requests (modulepreloads and dynamic imports included; prefetch
 * hints are not scripts), as paths, once `ready` has resolved and the network has been idle.
 * The page's context must block service workers, or scripts answered by one would not show.
 */
export async function scriptsLoadedBy(page, path, ready) {
  const urls = new Set()
  const onRequest = (request) => {
    if (request.resourceType() === 'script') urls.add(new URL(request.url()).pathname)
  }
  page.on('request', onRequest)
  await page.goto(path, { waitUntil: 'networkidle' })
  await ready()
  await page.waitForLoadState('networkidle')
  await sleep(500)
  page.off('request', onRequest)
  return [...urls].sort()
}

/** The files behind script paths in a build's public folder; a path the build does not hold is an error. */
export function publicFiles(output, paths) {
  return paths.map((path) => {
    const file = join(output, 'public', path)
    if (!existsSync(file)) throw new Error(`${path} was requested but is not in ${join(output, 'public')}`)
    return file
  })
}

/** gzip -9 sizes of script paths, in KiB, with each file's size. */
export function gzipKiB(output, paths) {
  let bytes = 0
  const files = []
  for (const [i, file] of publicFiles(output, paths).entries()) {
    const size = gzipSync(readFileSync(file), { level: 9 }).length
    files.push({ path: paths[i], size })
    bytes += size
  }
  return { kib: bytes / 1024, files }
}
