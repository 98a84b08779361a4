// What an upload's failed storage write becomes (server/utils/photo-storage.ts): 507 when the store
// is full, 503 with a retry time otherwise, and every object of the upload removed again. The store
// is unstorage's memory driver wrapped to fail as a disk or an S3 server would.
import { createError } from 'h3'
import { createStorage, type Storage } from 'unstorage'
import memoryDriver from 'unstorage/drivers/memory'
import { beforeAll, describe, expect, it } from 'vitest'
import { photoStorageFailure, storePhotoObjects } from '../../server/utils/photo-storage'

beforeAll(() => {
  // Nitro auto-imports createError on the server.
  Object.assign(globalThis, { createError })
})

const errno = (code: string) => Object.assign(new Error(`${code}: failed`), { code })

/** A memory store whose setItemRaw throws `failure` for keys matching `when`. */
function failingStore(when: RegExp, failure: Error): { storage: Storage, removed: string[] } {
  const storage = createStorage({ driver: memoryDriver() })
  const removed: string[] = []
  const setItemRaw = storage.setItemRaw.bind(storage)
  const removeItem = storage.removeItem.bind(storage)
  storage.setItemRaw = async (key, value, opts) => {
    if (when.test(key)) {
      // A filesystem write can fail with part of the file written.
      await setItemRaw(key, Buffer.from('half'), opts)
      throw failure
    }
    return setItemRaw(key, value, opts)
  }
  storage.removeItem = async (key, opts) => {
    removed.push(key)
    return removeItem(key, opts)
  }
  return { storage, removed }
}

describe('a failed photo storage write', () => {
  it('is 507 when the store is full, on disk or from S3, and 503 with a retry time otherwise', () => {
    for (const error of [errno('ENOSPC'), errno('EDQUOT'), new Error('[unstorage] [s3] [PUT] http://s3/photos/a.jpg: 507 Insufficient Storage')]) {
      const answer = photoStorageFailure(error)
      expect(answer.statusCode).toBe(507)
      expect(answer.data).toEqual({ message: expect.stringMatching(/photo store is full.*free space/) })
    }
    for (const error of [errno('EACCES'), errno('EROFS'), errno('ENOTDIR'), new Error('[unstorage] [s3] [PUT] http://s3/photos/a.jpg: 500 Internal Server Error'), new TypeError('fetch failed')]) {
      const answer = photoStorageFailure(error)
      expect(answer.statusCode).toBe(503)
      expect(answer.data).toEqual({ message: expect.stringMatching(/could not save this photo just now/), retryAfterSeconds: 30 })
    }
  })

  it('removes every object of the upload, the half-written one too, and keeps nothing', async () => {
    const { storage, removed } = failingStore(/thumb/, errno('ENOSPC'))
    const refused = await storePhotoObjects(storage, [{ key: 'org:1.jpg', bytes: Buffer.from('photo') }, { key: 'org:1.thumb.jpg', bytes: Buffer.from('thumb') }]).then(() => null, e => e as { statusCode: number })
    expect(refused?.statusCode).toBe(507)
    expect(removed.sort()).toEqual(['org:1.jpg', 'org:1.thumb.jpg'])
    expect(await storage.getKeys()).toEqual([])
  })

  it('writes nothing after a first write that fails, and stores both when nothing fails', async () => {
    const { storage, removed } = failingStore(/\.jpg$/, errno('EACCES'))
    const refused = await storePhotoObjects(storage, [{ key: 'org:2.jpg', bytes: Buffer.from('photo') }, { key: 'org:2.thumb.jpg', bytes: Buffer.from('thumb') }]).then(() => null, e => e as { statusCode: number })
    expect(refused?.statusCode).toBe(503)
    expect(removed).toEqual(['org:2.jpg'])
    expect(await storage.getKeys()).toEqual([])

    const fine = failingStore(/never/, errno('EACCES'))
    await storePhotoObjects(fine.storage, [{ key: 'org:3.jpg', bytes: Buffer.from('photo') }, { key: 'org:3.thumb.jpg', bytes: Buffer.from('thumb') }])
    expect((await fine.storage.getKeys()).sort()).toEqual(['org:3.jpg', 'org:3.thumb.jpg'])
  })
})
