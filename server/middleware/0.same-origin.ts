// Refuses a change sent from another site with 403 before its body is read (the rule and why:
// server/utils/request-origin.ts). Named to run first among the middleware, ahead of body-limit.ts
// and sync-body.ts, which read bodies.
export default defineEventHandler((event) => {
  // Reads pass at once: this runs on every request, files and API answers included.
  if (SAFE_METHODS.has(event.method)) return
  // Without the event: useRuntimeConfig(event) copies the whole runtime config and re-reads the
  // environment for it on every call, which was a fifth of the server's CPU under bench:load.
  const appUrl = useRuntimeConfig().appUrl
  const trustProxy = process.env.TRUST_PROXY === '1' || process.env.TRUST_PROXY === 'true'
  const host = getRequestHost(event, { xForwardedHost: false })
  const requestOrigin = `${getRequestProtocol(event, { xForwardedProto: trustProxy })}://${host}`
  const message = foreignOriginProblem({
    method: event.method,
    origin: getRequestHeader(event, 'origin'),
    secFetchSite: getRequestHeader(event, 'sec-fetch-site'),
    ownOrigins: [appUrl, requestOrigin],
    appUrl,
  })
  if (message) throw problem(403, message)
})
