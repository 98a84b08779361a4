// Start the local mail capture with the server when no SMTP_URL is configured,
// so captured messages can be read before anything is sent.
export default defineNitroPlugin(() => {
  if (import.meta.prerender || !mailIsCaptured()) return
  mailTransport().catch(error => console.error('[fourfold] local mail capture did not start:', error))
})
