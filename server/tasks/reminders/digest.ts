// The scheduled reminder digest (nuxt.config.ts scheduledTasks: every 15 minutes). From DIGEST_TIME
// on, each run mails everyone whose digest for today has not gone yet, so the first run of the day
// sends and the later ones only pick up people and organisations missed (a mail the mail server did
// not take waits in the mail outbox instead, server/utils/mail-outbox.ts). The lease makes one instance do the work while
// the others skip; the once-a-day rule itself rests on digest_sends (server/utils/digest.ts).
export default defineTask<string | DigestRunSummary>({
  meta: {
    name: 'reminders:digest',
    description: 'E-mail each coach and admin a digest of spot checks due and plan items late, once a day',
  },
  async run() {
    const settings = digestSettings()
    if (!settings.enabled) return { result: 'The digest is switched off (DIGEST_ENABLED).' }
    if (!digestTimeReached(Date.now(), settings.minutes)) return { result: `Not yet: digests go from ${settings.time}.` }
    const outcome = await withLease('reminders:digest', DIGEST_LEASE_MS, () => runDigests())
    if (!outcome.ran) return { result: 'Another instance is sending the digests.' }
    const s = outcome.result
    if (s.sent || s.queued || s.organisationErrors) console.info(`[fourfold] digests: ${s.sent} sent, ${s.queued} queued for the mail server, ${s.alreadySent} already sent, ${s.nothingToSay} with nothing to say, ${s.organisationErrors} organisations to retry`)
    return { result: s }
  },
})
