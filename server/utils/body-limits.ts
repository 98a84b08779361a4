import { SYNC_LIMITS } from '../../shared/utils/sync-limits'

// How large a request body each route accepts. h3 reads bodies whole with no cap,
// so the body-limit middleware enforces these before any route reads a byte more.
const DEFAULT_LIMIT_BYTES = 256 * 1024

const ROUTE_LIMITS: Array<{ prefix: string, bytes: number }> = [
  // Photo uploads: 10 MB of image plus multipart framing.
  { prefix: '/api/uploads', bytes: 10 * 1024 * 1024 + 64 * 1024 },
  // A tablet's push of lessons and marks (SYNC_LIMITS.bodyBytes); more waits for the next push.
  { prefix: '/api/sync', bytes: SYNC_LIMITS.bodyBytes },
]

export function bodyLimitFor(path: string): number {
  const configured = Number(process.env.BODY_LIMIT_BYTES || useRuntimeConfig().bodyLimitBytes) || DEFAULT_LIMIT_BYTES
  return ROUTE_LIMITS.find(r => path.startsWith(r.prefix))?.bytes ?? configured
}

export function tooLarge(limit: number) {
  const message = `The request body is larger than the ${Math.round(limit / 1024)} KiB this route accepts. Send less at once.`
  return createError({ statusCode: 413, statusMessage: 'Payload Too Large', message, data: { message } })
}
