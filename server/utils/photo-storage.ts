// Where photos are kept: the Nitro storage mount 'photos', mounted once per process at run time.
// nitro.storage in nuxt.config.ts is serialised into the build (driver options included), so an
// UPLOAD_DIR or S3_* set when the server starts would be ignored there; this mounts from the
// environment instead. The filesystem driver is the default; S3_BUCKET switches to the
// S3-compatible driver of unstorage, which then needs every S3_* variable.
import { resolve } from 'node:path'
import type { Storage } from 'unstorage'
import fsDriver from 'unstorage/drivers/fs'

export const PHOTO_MOUNT = 'photos'

const S3_VARIABLES = ['S3_BUCKET', 'S3_ENDPOINT', 'S3_REGION', 'S3_ACCESS_KEY_ID', 'S3_SECRET_ACCESS_KEY'] as const

export type PhotoStorageSettings
  = | { driver: 'fs', base: string }
    | { driver: 's3', bucket: string, endpoint: string, region: string, accessKeyId: string, secretAccessKey: string }
    | { driver: 'invalid', message: string }

/** Reads the storage choice from the environment; pure, so a unit test can cover every case. */
export function photoStorageSettings(env: Record<string, string | undefined>): PhotoStorageSettings {
  const anyS3 = S3_VARIABLES.some(name => env[name])
  if (!anyS3) return { driver: 'fs', base: resolve(env.UPLOAD_DIR || '.data/uploads') }
  const missing = S3_VARIABLES.filter(name => !env[name])
  if (missing.length) {
    return { driver: 'invalid', message: `S3 photo storage needs ${S3_VARIABLES.join(', ')}; ${missing.join(', ')} ${missing.length === 1 ? 'is' : 'are'} not set. Set them all, or none to keep photos in UPLOAD_DIR.` }
  }
  return {
    driver: 's3',
    bucket: env.S3_BUCKET!,
    endpoint: env.S3_ENDPOINT!,
    region: env.S3_REGION!,
    accessKeyId: env.S3_ACCESS_KEY_ID!,
    secretAccessKey: env.S3_SECRET_ACCESS_KEY!,
  }
}

let ready: Promise<Storage> | undefined

async function mountPhotoStorage(): Promise<Storage> {
  const settings = photoStorageSettings(process.env)
  if (settings.driver === 'invalid') throw new Error(settings.message)
  const root = useStorage()
  if (settings.driver === 's3') {
    // Loaded only when configured: the driver needs the optional package aws4fetch.
    let s3Driver: typeof import('unstorage/drivers/s3').default
    try {
      s3Driver = (await import('unstorage/drivers/s3')).default
    }
    catch (error) {
      throw new Error(`S3 photo storage could not be loaded (it needs the aws4fetch package installed beside the server): ${String(error)}`)
    }
    const { driver: _driver, ...options } = settings
    root.mount(PHOTO_MOUNT, s3Driver(options))
  }
  else {
    root.mount(PHOTO_MOUNT, fsDriver({ base: settings.base }))
  }
  return useStorage(PHOTO_MOUNT)
}

/** The photos storage, mounted on first use; a failed mount is retried on the next call. */
export function usePhotoStorage(): Promise<Storage> {
  ready ??= mountPhotoStorage().catch((error) => {
    ready = undefined
    throw error
  })
  return ready
}

/** The storage as a request sees it: a misconfiguration is a 503 that says what to fix, not a bare 500. */
export async function photoStorageOrFail(): Promise<Storage> {
  try {
    return await usePhotoStorage()
  }
  catch (error) {
    console.error('[fourfold] photo storage is not available:', error)
    const message = 'Photo storage is not available on this server right now. Ask your administrator to check the photo storage settings.'
    throw createError({ statusCode: 503, statusMessage: 'Service Unavailable', message, data: { message } })
  }
}

/**
 * Why a write to photo storage failed, as the uploader should hear it: 507 when the store is full
 * (ENOSPC / EDQUOT on disk, 507 from an S3-compatible server), otherwise 503 (unwritable folder,
 * S3 down or answering 5xx) with a Retry-After, since the same photo may well go in later.
 */
export function photoStorageFailure(error: unknown) {
  const code = (error as { code?: unknown })?.code
  const full = code === 'ENOSPC' || code === 'EDQUOT' || /: 507 /.test(String((error as Error)?.message ?? ''))
  const message = full
    ? 'The photo store is full, so this photo was not saved. Ask your administrator to free space in photo storage, then upload it again.'
    : 'Photo storage could not save this photo just now, so nothing was saved. Try the upload again in a minute; if it keeps failing, ask your administrator to check photo storage.'
  return createError({ statusCode: full ? 507 : 503, statusMessage: full ? 'Insufficient Storage' : 'Service Unavailable', message, data: { message, ...(full ? {} : { retryAfterSeconds: 30 }) } })
}

/**
 * Writes an upload's objects (the photo and its thumbnail) in order. If one fails, every object of
 * the upload is removed again, the failed one too (a filesystem write can leave part of a file),
 * and the failure is answered in words (photoStorageFailure): nothing half-written is kept, and
 * no uploads row is written for it.
 */
export async function storePhotoObjects(storage: Storage, objects: Array<{ key: string, bytes: Buffer }>): Promise<void> {
  for (const [i, { key, bytes }] of objects.entries()) {
    try {
      await storage.setItemRaw(key, bytes)
    }
    catch (error) {
      console.error(`[fourfold] photo storage refused ${key}:`, error)
      await Promise.allSettled(objects.slice(0, i + 1).map(o => storage.removeItem(o.key)))
      throw photoStorageFailure(error)
    }
  }
}

/** Stored bytes as a Buffer, whichever driver returned them (fs: Buffer, s3: ArrayBuffer). */
export async function readPhotoBytes(key: string): Promise<Buffer | null> {
  const storage = await photoStorageOrFail()
  const value: unknown = await storage.getItemRaw(key)
  if (value === null || value === undefined) return null
  if (Buffer.isBuffer(value)) return value
  if (value instanceof ArrayBuffer) return Buffer.from(value)
  if (ArrayBuffer.isView(value)) return Buffer.from(value.buffer, value.byteOffset, value.byteLength)
  return null
}
