// Sign out: ends the session. Any signed-in caller (signed-out callers get 204 too).
export default defineEventHandler(async (event) => {
  await clearUserSession(event)
  setResponseStatus(event, 204)
  return null
})
