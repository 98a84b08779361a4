// How much one sync push may carry. Kept apart from the zod schemas so the tablet's sync code
// can read the limits without loading zod into the runner's bundle.
export const SYNC_LIMITS = {
  lessons: 500,
  checks: 500,
  events: 20_000,
  /** Bytes of one push; a device with more waiting sends it in several pushes. */
  bodyBytes: 8 * 1024 * 1024,
} as const
