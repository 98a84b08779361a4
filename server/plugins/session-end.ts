// Every cleared session is ended on the server too (server/utils/ended-sessions.ts).
export default defineNitroPlugin(() => {
  if (import.meta.prerender) return
  sessionHooks.hook('clear', async (session, event) => {
    // A session already listed (a copy used after sign-out) needs no second write.
    if (event.context.sessionAlreadyEnded) return
    if (typeof session.sessionId === 'string') await endSession(session.sessionId, session.signedInAt)
  })
})
