// Open the database and apply migrations as the server starts, so the first
// request does not pay for it. Prerendering has no database to migrate.
export default defineNitroPlugin(() => {
  if (import.meta.prerender) return
  useDb().catch((error) => {
    console.error('[fourfold] database could not be opened or migrated:', error)
  })
})
