// Sends today's reminder digests of the caller's organisation now, to everyone who has not had
// theirs yet (the same once-a-day rule as the scheduled run). Admins only.
export default defineEventHandler(async (event) => {
  const caller = await requireRole(event, 'admin')
  if (!digestSettings().enabled) throw conflict('Reminder e-mails are switched off on this server (DIGEST_ENABLED).')
  // Its own lease per organisation, so a click here never waits for (or blocks) the scheduled run.
  const outcome = await withLease(`reminders:digest:${caller.organisation.id}`, DIGEST_LEASE_MS, () => runDigests({ organisationIds: [caller.organisation.id] }))
  if (!outcome.ran) throw conflict('The digests of your organisation are being sent right now. Look again in a minute.')
  const { organisations: _organisations, organisationErrors, ...run } = outcome.result
  // Asked to send now: whatever of the organisation's mail waits in the outbox (say, a digest an
  // instance could not hand to its mail server) is tried now too, not at its next retry.
  const fromOutbox = (await deliverQueuedMail({ organisationId: caller.organisation.id, ignoreBackoff: true }).catch(() => ({ sent: 0 }))).sent
  const summary = { ...run, fromOutbox }
  // The cause is in the server log; whatever went out before it stays sent, and a retry sends the rest.
  if (organisationErrors) throw problem(503, 'The digests could not all be worked out just now. Try again in a minute; nobody gets a second mail.')
  await writeTransaction(tx => recordAudit(tx, { organisationId: caller.organisation.id, actorUserId: caller.user.id, action: 'digest.sent_now', targetType: 'organisation', targetId: caller.organisation.id, detail: { ...summary } }))
  return summary
})
