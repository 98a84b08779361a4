// Photo checks and re-encoding. A file is judged by its content (magic bytes via file-type),
// never by its name or declared type; its pixel count is read from the header and refused above
// the limit before anything is decoded (decompression bombs); then sharp applies the EXIF
// orientation, fits it within 2048 px and writes a fresh JPEG (or WebP when it has
// transparency) and a 400 px thumbnail. sharp writes no metadata unless asked (no withMetadata
// here), so EXIF, GPS position, XMP and ICC are left behind.
import type { H3Event } from 'h3'
import { fileTypeFromBuffer } from 'file-type'
import sharp, { type Metadata } from 'sharp'
import { PHOTO_LIMITS } from '../../shared/schemas/uploads'

export interface EncodedPhoto {
  mime: 'image/jpeg' | 'image/webp'
  ext: 'jpg' | 'webp'
  full: Buffer
  thumb: Buffer
  width: number
  height: number
  /** What the content was recognised as, for the audit log. */
  detected: string
}

const ALWAYS_ACCEPTED = new Set(['image/jpeg', 'image/png', 'image/webp'])
const DECODER_FORMATS = new Set(['jpeg', 'png', 'webp', 'heif'])
const HEIF_MIMES = new Set(['image/heic', 'image/heif', 'image/heic-sequence', 'image/heif-sequence'])

/**
 * Whether sharp says its libvips reads HEIC (HEVC); sharp's prebuilt binaries read only AVIF from the
 * HEIF family. sharp decides this from the versions.json of its prebuilt package, which a bundled
 * server may not carry, so a yes here can be wrong: a HEIC photo is also refused when decoding fails.
 */
export function heicMayBeReadable(): boolean {
  const heif = (sharp.format as unknown as Record<string, { input?: { buffer?: boolean, fileSuffix?: string[] } } | undefined>).heif
  return Boolean(heif?.input?.buffer && heif.input.fileSuffix?.some(suffix => suffix === '.heic' || suffix === '.heif'))
}

/** What the messages promise: HEIC is taken when this machine can decode it, but never promised. */
const KINDS = 'JPEG, PNG or WebP'
const HEIC_UNREADABLE = 'This photo is in HEIC format, which this server cannot read. Send it as JPEG: on an iPad or iPhone, choose Settings → Camera → Formats → Most Compatible, then take it again.'

function photoError(statusCode: 413 | 415 | 422, message: string) {
  const statusMessage = { 413: 'Payload Too Large', 415: 'Unsupported Media Type', 422: 'Unprocessable Entity' }[statusCode]
  return createError({ statusCode, statusMessage, message, data: { message } })
}

/** SVG is XML text, so file-type names it xml or nothing; look at the first tag ourselves. */
function looksLikeSvg(bytes: Uint8Array): boolean {
  const head = Buffer.from(bytes.subarray(0, 4096)).toString('utf8').replace(/^\uFEFF/, '').trimStart().toLowerCase()
  if (!head.startsWith('<')) return false
  const firstElement = head.replace(/<\?xml[\s\S]*?\?>|<!--[\s\S]*?-->|<!doctype[^>]*>/g, '').trimStart()
  return /^<(?:[\w-]+:)?svg[\s>/]/.test(firstElement)
}

/** The one multipart part named `file`: its bytes, whatever name and type the sender gave it. */
export async function readPhotoPart(event: H3Event): Promise<Buffer> {
  let parts: Awaited<ReturnType<typeof readMultipartFormData>>
  try {
    parts = await readMultipartFormData(event)
  }
  catch (error) {
    if (isError(error) && error.statusCode === 413) throw error
    parts = undefined
  }
  const files = (parts ?? []).filter(p => p.name === 'file')
  if (!files.length) {
    throw badRequest('Send the photo as multipart/form-data in a field named "file".')
  }
  if (files.length > 1) throw badRequest('Send one photo at a time.')
  const data = files[0]!.data
  if (!data.byteLength) throw badRequest('That file is empty. Choose the photo again.')
  return data
}

/** Refuses anything but a photo of a kind this server can decode, by content. */
export async function recognisePhoto(bytes: Uint8Array): Promise<string> {
  if (bytes.byteLength > PHOTO_LIMITS.maxBytes) {
    throw photoError(413, `That photo is ${(Math.ceil(bytes.byteLength / 1024 / 1024 * 10) / 10).toFixed(1)} MB; the most we accept is 10 MB. Take it again at a lower resolution, or send a smaller copy.`)
  }
  if (looksLikeSvg(bytes)) {
    throw photoError(415, `SVG drawings are not accepted. Send a photo (${KINDS}).`)
  }
  const type = await fileTypeFromBuffer(bytes)
  if (type && ALWAYS_ACCEPTED.has(type.mime)) return type.mime
  if (type && HEIF_MIMES.has(type.mime)) {
    if (heicMayBeReadable()) return type.mime
    throw photoError(415, HEIC_UNREADABLE)
  }
  const what = type ? `That file is a ${type.ext.toUpperCase()} file, whatever its name says.` : 'That file is not a photo, whatever its name says.'
  throw photoError(415, `${what} Send a photo (${KINDS}); SVG drawings are not accepted.`)
}

/** Reads the header only, refuses too many pixels, then decodes, orients, resizes and re-encodes. */
export async function encodePhoto(bytes: Uint8Array, detected: string): Promise<EncodedPhoto> {
  const input = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength)
  const heic = HEIF_MIMES.has(detected)
  const options = { limitInputPixels: PHOTO_LIMITS.maxPixels, failOn: 'error' } as const
  let meta: Metadata
  try {
    // Header only, no pixels decoded; unlimited here so the refusal below can name the size.
    meta = await sharp(input, { ...options, limitInputPixels: false }).metadata()
  }
  catch {
    if (heic) throw photoError(415, HEIC_UNREADABLE)
    throw photoError(422, 'That photo could not be read; the file may be damaged or cut short. Take it again, or send another copy.')
  }
  // Belt and braces: the decoder must see the same kind of photo that the sniffing saw.
  if (!meta.format || !DECODER_FORMATS.has(meta.format)) {
    throw photoError(415, `That file is not a photo we can use. Send a photo (${KINDS}); SVG drawings are not accepted.`)
  }
  const width = meta.width ?? 0
  const height = meta.height ?? 0
  if (!width || !height) {
    throw photoError(422, 'That photo has no size we can read; the file may be damaged. Take it again, or send another copy.')
  }
  if (width > PHOTO_LIMITS.maxSide || height > PHOTO_LIMITS.maxSide || width * height > PHOTO_LIMITS.maxPixels) {
    throw photoError(422, `That image is ${width} × ${height} pixels; the most we accept is ${PHOTO_LIMITS.maxPixels / 1_000_000} megapixels and ${PHOTO_LIMITS.maxSide} pixels a side. Send a smaller copy.`)
  }

  const transparent = Boolean(meta.hasAlpha)
  const encode = (side: number) => {
    const pipeline = sharp(input, options)
      .rotate()
      .resize({ width: side, height: side, fit: 'inside', withoutEnlargement: true })
    return (transparent ? pipeline.webp({ quality: 82 }) : pipeline.jpeg({ quality: 82, mozjpeg: true }))
      .toBuffer({ resolveWithObject: true })
  }
  try {
    const [full, thumb] = await Promise.all([encode(PHOTO_LIMITS.fullSide), encode(PHOTO_LIMITS.thumbSide)])
    return {
      mime: transparent ? 'image/webp' : 'image/jpeg',
      ext: transparent ? 'webp' : 'jpg',
      full: full.data,
      thumb: thumb.data,
      width: full.info.width,
      height: full.info.height,
      detected,
    }
  }
  catch {
    // Without an HEVC decoder libheif reads a HEIC header but not its pixels.
    if (heic) throw photoError(415, HEIC_UNREADABLE)
    throw photoError(422, 'That photo could not be decoded; the file may be damaged or cut short. Take it again, or send another copy.')
  }
}

/** Storage keys sit under the organisation's id, so one organisation's photos share a prefix. */
export function photoKeys(organisationId: string, uploadId: string, ext: string) {
  return { storageKey: `${organisationId}:${uploadId}.${ext}`, thumbKey: `${organisationId}:${uploadId}.thumb.${ext}` }
}

export function photoUrls(uploadId: string) {
  return { url: `/api/uploads/${uploadId}`, thumbUrl: `/api/uploads/${uploadId}?size=thumb` }
}
