// New ids made on the tablet (lineage ids of breakdown elements, lessons, checks, events). A file of
// its own: the tablet's store imports it into the script every page loads, and breakdown-words.ts
// brings its date formatters and labels along.

/**
 * A new lineage id. crypto.randomUUID exists only in secure contexts (https, localhost); a
 * tablet on a plain-http site address still needs ids, so fall back to a v4 UUID (RFC 9562 §5.4)
 * from getRandomValues, which every browser has.
 */
export function newElementId(): string {
  if (typeof crypto.randomUUID === 'function') return crypto.randomUUID()
  const b = crypto.getRandomValues(new Uint8Array(16))
  b[6] = (b[6]! & 0x0F) | 0x40
  b[8] = (b[8]! & 0x3F) | 0x80
  const hex = [...b].map(x => x.toString(16).padStart(2, '0')).join('')
  return `${hex.slice(0, 8)}-${hex.slice(8, 12)}-${hex.slice(12, 16)}-${hex.slice(16, 20)}-${hex.slice(20)}`
}
