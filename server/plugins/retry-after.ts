// A refusal that asks the client to come back later (data.retryAfterSeconds: the database locked by
// another process, database-busy.ts) carries the Retry-After header (RFC 9110 §10.2.3), which the
// tablet's sync honours. Nitro calls 'error' hooks synchronously before its error handler writes
// the answer, so the header set here goes out with it (tests/e2e/faults-write-lock.test.ts).
export default defineNitroPlugin((nitroApp) => {
  nitroApp.hooks.hook('error', (error, { event }) => {
    const seconds = retryAfterOf(error)
    if (seconds && event && !event.node.res.headersSent) setResponseHeader(event, 'Retry-After', seconds)
  })
})
