// Captured mail from the local SMTP stand-in, newest first. Only while mail is captured
// locally and the capture page is switched on (development and the demo); otherwise 404.
export default defineEventHandler(async () => {
  const enabled = mailIsCaptured() && (process.env.MAIL_CAPTURE_PAGE ? process.env.MAIL_CAPTURE_PAGE === 'true' : useRuntimeConfig().mailCapturePage)
  if (!enabled) throw notFound('The mail capture page')
  return listCapturedMail()
})
