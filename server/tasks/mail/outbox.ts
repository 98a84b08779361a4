// The mail outbox's safety net (nuxt.config.ts scheduledTasks: every 5 minutes). Each instance
// already retries what it could not send on its own timer (server/utils/mail-outbox.ts); this
// also picks up a mail whose sender stopped mid-send (its claim has expired) or whose instance
// went away. One instance at a time under the lease; each mail is still claimed on its own.
export default defineTask<string | DeliveryOutcome>({
  meta: {
    name: 'mail:outbox',
    description: 'Send the mail that waits in the outbox because the mail server did not take it',
  },
  async run() {
    const outcome = await withLease('mail:outbox', 4 * 60_000, () => deliverQueuedMail())
    if (!outcome.ran) return { result: 'Another instance is sending the queued mail.' }
    return { result: outcome.result }
  },
})
