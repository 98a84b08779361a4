// Mount photo storage as the server starts (filesystem under UPLOAD_DIR, or S3 when S3_* are set),
// so a missing or half-set configuration is reported at start rather than at the first upload.
export default defineNitroPlugin(() => {
  if (import.meta.prerender) return
  usePhotoStorage().catch((error) => {
    console.error('[fourfold] photo storage could not be mounted:', error instanceof Error ? error.message : error)
  })
})
