// Photos for important steps and key points: the limits the upload form and the route share,
// the answer to an upload, and the query of the route that serves one.
import { z } from 'zod'

export const PHOTO_LIMITS = {
  /** Largest file accepted, in bytes (10 MB). */
  maxBytes: 10 * 1024 * 1024,
  /** Decompression-bomb guard: more pixels than this, or a longer side, is refused before decoding. */
  maxPixels: 40_000_000,
  maxSide: 12_000,
  /** The stored photo fits in this square; smaller photos are never enlarged. */
  fullSide: 2048,
  thumbSide: 400,
} as const

/** For `<input accept>`; the server still checks the content itself. */
export const PHOTO_ACCEPT = 'image/jpeg,image/png,image/webp,image/heic,image/heif'

export interface UploadedPhoto {
  id: string
  url: string
  thumbUrl: string
  width: number
  height: number
}

export const photoQuerySchema = z.object({
  size: z.enum(['full', 'thumb'], { error: 'Ask for size=thumb or size=full.' }).optional(),
})
