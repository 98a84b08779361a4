// One app-like process writing to a shared SQLite file as fast as it can (tests/unit/write-turns.test.ts).
// polite: the app's way — every write through serialiseWrite (write-lock.ts: probe, take turns,
// write-turns.ts) on a client set up like db.ts does (write-begin.ts). greedy: a plain client that
// begins its next write transaction right after each commit, as a process that takes no turns.
// Each transaction holds the lock `holdMs` (as a sync push's yields do). Says "ready", waits for
// "go" on stdin, writes for `durationMs`, prints its commits, refusals and longest wait as JSON.
import { createClient } from '@libsql/client'
import { serialiseWrite } from '../../server/utils/write-lock'
import { beginWritesWithoutStuckStatements } from '../../server/utils/write-begin'
import { probeWriteLockOf } from '../../server/utils/database-busy'

const [url, mode, name, durationMs, holdMs] = process.argv.slice(2) as [string, 'polite' | 'greedy', string, string, string]
const client = createClient({ url, timeout: 5000 })
if (mode === 'polite') {
  beginWritesWithoutStuckStatements(client, 5000)
  // As useDb() does: the write queue's probe and the turns file are about this database.
  probeWriteLockOf(url)
}
await client.execute('select 1')
const sleep = (ms: number) => new Promise(resolve => setTimeout(resolve, ms))

async function write(n: number) {
  const tx = await client.transaction('write')
  try {
    await tx.execute({ sql: 'insert into marks (id) values (?)', args: [`${name}-${n}`] })
    await sleep(Number(holdMs))
    await tx.commit()
  }
  finally {
    tx.close()
  }
}

process.stdout.write('ready\n')
process.stdin.once('data', async () => {
  const end = Date.now() + Number(durationMs)
  let commits = 0
  let refused = 0
  let longestWaitMs = 0
  while (Date.now() < end) {
    const asked = Date.now()
    try {
      if (mode === 'polite') await serialiseWrite(() => write(commits))
      else await write(commits)
      commits++
    }
    catch (error) {
      refused++
      if (!/busy/i.test(String((error as Error)?.message))) throw error
    }
    longestWaitMs = Math.max(longestWaitMs, Date.now() - asked - Number(holdMs))
  }
  process.stdout.write(`${JSON.stringify({ name, mode, commits, refused, longestWaitMs })}\n`)
  client.close()
  process.exit(0)
})
