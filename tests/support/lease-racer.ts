// One process racing for a task lease (tests/unit/task-lease.test.ts): opens its own connection to
// the shared SQLite file, says "ready", waits for "go" on stdin so every racer starts together,
// tries takeLease once and prints whether it won.
import { createClient } from '@libsql/client'
import { takeLease } from '../../server/utils/task-lease'

const [url, name, holder, ttl] = process.argv.slice(2) as [string, string, string, string]
const client = createClient({ url, timeout: 5000 })
await client.execute('select 1')
process.stdout.write('ready\n')
process.stdin.once('data', async () => {
  const won = await takeLease(client, name, holder, Number(ttl))
  process.stdout.write(`${JSON.stringify({ holder, won })}\n`)
  client.close()
  process.exit(0)
})
