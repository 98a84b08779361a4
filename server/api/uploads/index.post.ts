// Upload a photo for an important step or key point (multipart field `file`). Coaches and admins.
import { randomUUID } from 'node:crypto'
import { uploads } from '../../db/schema'
import type { UploadedPhoto } from '../../../shared/schemas/uploads'

export default defineEventHandler(async (event): Promise<UploadedPhoto> => {
  // Who first: nobody else's file is read, sniffed or decoded.
  const caller = await requireRole(event, 'coach', 'admin')
  const part = await readPhotoPart(event)
  const detected = await recognisePhoto(part)
  const photo = await encodePhoto(part, detected)

  const id = randomUUID()
  const organisationId = caller.organisation.id
  const { storageKey, thumbKey } = photoKeys(organisationId, id, photo.ext)
  const storage = await photoStorageOrFail()
  // Objects first, then the row that refers to them: a failed write leaves neither (503 / 507).
  await storePhotoObjects(storage, [{ key: storageKey, bytes: photo.full }, { key: thumbKey, bytes: photo.thumb }])
  try {
    await writeTransaction(async (tx) => {
      await tx.insert(uploads).values({ id, organisationId, storageKey, thumbKey, mime: photo.mime, width: photo.width, height: photo.height, bytes: photo.full.byteLength, createdBy: caller.user.id })
      await recordAudit(tx, { organisationId, actorUserId: caller.user.id, action: 'upload.created', targetType: 'upload', targetId: id, detail: { received: detected, receivedBytes: part.byteLength, stored: photo.mime, width: photo.width, height: photo.height, bytes: photo.full.byteLength } })
    })
  }
  catch (error) {
    // No row, no files: nothing refers to them.
    await Promise.allSettled([storage.removeItem(storageKey), storage.removeItem(thumbKey)])
    throw error
  }
  setResponseStatus(event, 201)
  return { id, ...photoUrls(id), width: photo.width, height: photo.height }
})
