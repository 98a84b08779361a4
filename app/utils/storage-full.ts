// The tablet's storage full (the browser's quota for this site reached): IndexedDB refuses the
// write with a QuotaExceededError, straight from IndexedDB (a raw transaction's error, as in
// appendEvent) or wrapped by Dexie (Dexie.QuotaExceededError, or an AbortError / ModifyError /
// BulkError whose inner error or failures hold it). Whatever was committed before stays: a refused
// transaction changes nothing. The coach is told in words what happened and what to do.

/** A mark or change the tablet could not keep because its storage is full. */
export class StorageFullError extends Error {
  override name = 'StorageFullError'
  constructor(cause: unknown) {
    super('This tablet\'s storage is full.', { cause })
  }
}

/** The legacy DOMException code of QUOTA_EXCEEDED_ERR (WebIDL), still set by some browsers. */
const QUOTA_EXCEEDED_CODE = 22

/** True when the error, or one it wraps, says the browser's storage quota is reached. */
export function isStorageFull(error: unknown, depth = 0): boolean {
  if (!error || typeof error !== 'object' || depth > 4) return false
  const e = error as { name?: unknown, code?: unknown, inner?: unknown, cause?: unknown, failures?: unknown }
  if (e.name === 'StorageFullError' || e.name === 'QuotaExceededError' || e.code === QUOTA_EXCEEDED_CODE) return true
  if (isStorageFull(e.inner, depth + 1) || isStorageFull(e.cause, depth + 1)) return true
  return Array.isArray(e.failures) && e.failures.some(f => isStorageFull(f, depth + 1))
}

/**
 * What the runner says when a write failed: "Not saved: <what>." and why, in words a coach can act
 * on. Storage full gets its own: the earlier marks are safe, send them to the server, make room.
 */
export function saveFailureWords(what: string, error: unknown): string {
  const thing = `${what.charAt(0).toLowerCase()}${what.slice(1)}`
  if (isStorageFull(error)) {
    return `Not saved: ${thing}. This tablet's storage is full. Everything recorded before it is safe on this tablet: sync now (Today, Send now) so it reaches the server, then free space on the tablet (remove photos, videos or apps it does not need) and try again.`
  }
  return `Not saved: ${thing}. The tablet's storage refused it (${error instanceof Error ? error.message : 'unknown error'}); try again.`
}
