// Direct access to a test server's SQLite file, for the few checks that need to move time
// (expire a token) or look at what was stored. Never used to set up what the API can set up.
import { createClient } from '@libsql/client'

export async function sql(databaseUrl: string, statement: string, args: Array<string | number | null> = []) {
  const client = createClient({ url: databaseUrl, timeout: 5000 })
  try {
    return await client.execute({ sql: statement, args })
  }
  finally {
    client.close()
  }
}
