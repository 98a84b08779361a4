// Every child process, worker thread and temporary folder a benchmark makes is tracked here, so it is
// stopped and removed at the end, on an error, and on Ctrl-C.
import { rmSync } from 'node:fs'
import { mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'

export const sleep = ms => new Promise(r => setTimeout(r, ms))

const children = new Set()
const workers = new Set()
const tempDirs = new Set()

/** Tracks a spawned child so cleanUp() stops it. */
export function trackChild(child) {
  children.add(child)
  return child
}

export function untrackChild(child) {
  children.delete(child)
}

/** Tracks a worker thread so cleanUp() terminates it (it would keep the process alive). */
export function trackWorker(worker) {
  workers.add(worker)
  worker.once('exit', () => workers.delete(worker))
  return worker
}

/** A new folder under the system temp folder, removed by cleanUp(). */
export async function makeTempDir(prefix) {
  const dir = await mkdtemp(join(tmpdir(), prefix))
  tempDirs.add(dir)
  return dir
}

export async function stopChild(child) {
  if (child.exitCode === null && child.signalCode === null) {
    const exited = new Promise(r => child.once('exit', r))
    child.kill('SIGTERM')
    await Promise.race([exited, sleep(5000)])
    if (child.exitCode === null && child.signalCode === null) child.kill('SIGKILL')
  }
  children.delete(child)
}

export async function cleanUp() {
  await Promise.all([...workers].map(worker => worker.terminate()))
  await Promise.all([...children].map(stopChild))
  await Promise.all([...tempDirs].map(async (dir) => {
    await rm(dir, { recursive: true, force: true })
    tempDirs.delete(dir)
  }))
}

// Last resort if the process ends some other way: synchronous, best effort.
process.on('exit', () => {
  for (const child of children) child.kill('SIGKILL')
  for (const dir of tempDirs) rmSync(dir, { recursive: true, force: true })
})
for (const signal of ['SIGINT', 'SIGTERM']) {
  process.once(signal, () => {
    console.error(`\n${signal}: stopping servers`)
    cleanUp().finally(() => process.exit(130))
  })
}
