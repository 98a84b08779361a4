// npm run db:migrate — apply the committed migrations in drizzle/ to DATABASE_URL.
import { openMigratedDb } from './db.mjs'

const { client, url } = await openMigratedDb()
client.close()
console.log(`Migrations applied to ${url}`)
