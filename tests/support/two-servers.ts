// Two built servers on one SQLite file, as two app instances behind a load balancer: the per-process
// caches' freshness tests (plan, records) and the two-instance load test.
import { mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { startServer, type TestServer } from './server'

export interface TwoServers { a: TestServer, b: TestServer, stop: () => Promise<void> }

export async function startTwoServers(label: string): Promise<TwoServers> {
  const dir = await mkdtemp(join(tmpdir(), `fourfold-${label}-`))
  const started: TestServer[] = []
  const stop = async () => {
    for (const s of started.reverse()) await s.stop()
    await rm(dir, { recursive: true, force: true })
  }
  try {
    // One after the other, so the second finds the migrations applied.
    started.push(await startServer({ dir }))
    started.push(await startServer({ dir }))
  }
  catch (error) {
    await stop()
    throw error
  }
  return { a: started[0]!, b: started[1]!, stop }
}
