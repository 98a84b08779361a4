// Start the local mail capture with the server when no SMTP_URL is configured,
// so captured messages can be read before anything is sent; and send what is still waiting in
// the mail outbox from before this start (mail-outbox.ts), once the server has settled.
export default defineNitroPlugin(() => {
  if (import.meta.prerender) return
  if (mailIsCaptured()) mailTransport().catch(error => console.error('[fourfold] local mail capture did not start:', error))
  setTimeout(() => {
    deliverQueuedMail().catch(error => console.error('[fourfold] queued mail could not be delivered at start; tried again later:', error))
  }, 2000).unref()
})
