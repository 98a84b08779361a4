// Liveness and readiness: answers { ok: true } once the database answers. Anyone may call it.
import { sql } from 'drizzle-orm'

export default defineEventHandler(async (event) => {
  try {
    const db = await useDb()
    await db.run(sql`select 1`)
    return { ok: true }
  }
  catch {
    setResponseStatus(event, 503)
    return { ok: false, message: 'The database is not answering yet.' }
  }
})
