// Serve a photo (or `?size=thumb`, its thumbnail) to any signed-in member of the organisation that owns it.
import { and, eq } from 'drizzle-orm'
import { uploads } from '../../db/schema'
import { idParamsSchema } from '../../../shared/schemas/common'
import { photoQuerySchema } from '../../../shared/schemas/uploads'

export default defineEventHandler(async (event) => {
  const { id } = await paramsValid(event, idParamsSchema)
  const { size } = queryValid(event, photoQuerySchema)
  const caller = await requireSignedIn(event)
  const db = await useDb()
  const [row] = await db.select({ storageKey: uploads.storageKey, thumbKey: uploads.thumbKey, mime: uploads.mime })
    .from(uploads)
    .where(and(eq(uploads.id, id), eq(uploads.organisationId, caller.organisation.id)))
    .limit(1)
  if (!row) throw notFound('That photo')
  const bytes = await readPhotoBytes(size === 'thumb' ? row.thumbKey : row.storageKey)
  if (!bytes) {
    console.error(`[fourfold] upload ${id} has a row but no stored ${size === 'thumb' ? 'thumbnail' : 'image'}`)
    throw notFound('That photo')
  }
  setResponseHeaders(event, {
    'Content-Type': row.mime,
    'Content-Length': String(bytes.byteLength),
    // An upload never changes: a new photo gets a new id.
    'Cache-Control': 'private, max-age=31536000, immutable',
    'X-Content-Type-Options': 'nosniff',
    'Content-Security-Policy': 'default-src \'none\'; sandbox',
  })
  return bytes
})
