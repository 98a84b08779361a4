// Mail goes through a durable outbox (mail_outbox) instead of straight to SMTP, so a mail server
// that is down never costs a person their action or their mail. The route writes the mail in the
// same transaction as the invite, reset or digest claim (queueMail), then asks for it to be sent
// at once (deliverQueuedMail with its id). What the mail server does not take stays queued and is
// tried again: by a timer in this process at the row's next attempt (2 s, 4 s, 8 s … up to
// 5 minutes), by every later delivery here once one has gone through (the server is evidently
// back), at start, and by the scheduled task mail:outbox (server/tasks/mail/outbox.ts).
//
// Never two copies from two instances: before sending, a run claims rows in one UPDATE … RETURNING
// (claimed_by, claimed_until), so each row is handed to exactly one run; a row is deleted once the
// mail server has taken it, and only a run that died mid-send leaves a claim to expire. Such a row
// is sent again (an invite or reset link arriving twice is harmless; one never arriving is not),
// except a digest, which is dropped: the digest's rule is "at most once a day", and its
// digest_sends claim stays at sent_at = 0 (server/utils/digest.ts). A row that is not sent by its
// expires_at (the link's own lifetime, the digest's day) is dropped with a warning in the log; it
// held the one-time link only until then. A mail the server refuses for good (5xx reply) three
// times is dropped too.
import { randomUUID } from 'node:crypto'
import { hostname } from 'node:os'
import type { InStatement } from '@libsql/client'
import { mailOutbox } from '../db/schema'
import type { OutgoingMail } from './mail'

export type MailKind = 'invite' | 'reset' | 'digest'

export interface QueuedMail extends OutgoingMail {
  kind: MailKind
  organisationId?: string | null
  /** After this (ms) the mail is not worth sending: its link has expired, its day is over. */
  expiresAt: number
  /** The digest_sends claim confirmed (sent_at) when this mail has gone. */
  digestSendId?: string | null
}

/** How long a run may take to send one claimed mail before another run may take it over. */
export const SEND_CLAIM_MS = 2 * 60_000
const FIRST_RETRY_MS = 2000
const LONGEST_RETRY_MS = 5 * 60_000
/** 5xx replies ("mailbox unavailable") in a row before a mail is given up. */
const PERMANENT_REFUSALS = 3
/** Mails claimed by one run at most (each is one SMTP conversation). */
const BATCH = 50

const PROCESS = `${hostname()}:${process.pid}:${randomUUID().slice(0, 8)}`

/** The wait before try number `attempts + 1`: 2 s, 4 s, 8 s … up to 5 minutes. */
export function mailRetryDelay(attempts: number): number {
  return Math.min(LONGEST_RETRY_MS, FIRST_RETRY_MS * 2 ** Math.max(0, attempts - 1))
}

/** An SMTP reply that will not change by trying again (RFC 5321 §4.2.1: 5yz is a permanent negative reply). */
export function isPermanentRefusal(error: unknown): boolean {
  const code = (error as { responseCode?: unknown })?.responseCode
  return typeof code === 'number' && code >= 500 && code < 600
}

type Writer = Pick<Db, 'insert'>

/** Puts one mail in the outbox; call it inside the transaction of the action it belongs to. Its id. */
export async function queueMail(tx: Writer, mail: QueuedMail, now = Date.now()): Promise<string> {
  const id = randomUUID()
  await tx.insert(mailOutbox).values({
    id,
    organisationId: mail.organisationId ?? null,
    kind: mail.kind,
    recipient: mail.to,
    subject: mail.subject,
    text: mail.text,
    html: mail.html,
    digestSendId: mail.digestSendId ?? null,
    createdAt: now,
    expiresAt: mail.expiresAt,
    nextAttemptAt: now,
  })
  return id
}

export interface DeliveryOptions {
  /** Only these mails (the one a route just queued). */
  ids?: string[]
  /** Only this organisation's mails (an admin's "send now"). */
  organisationId?: string
  /** Also mails whose next attempt is not due yet: the mail server has just been seen to answer. */
  ignoreBackoff?: boolean
}

export interface DeliveryOutcome {
  /** Mails the mail server took in this run (removed from the outbox). */
  sent: number
  /** Mails claimed in this run that the mail server did not take (still queued, unless given up). */
  notSent: number
}

/** The retry timer of this process: one at a time, for the earliest mail waiting. */
let retryTimer: ReturnType<typeof setTimeout> | undefined
let retryAt = Number.POSITIVE_INFINITY

function retryAtTime(at: number) {
  if (retryTimer && retryAt <= at) return
  clearTimeout(retryTimer)
  retryAt = at
  retryTimer = setTimeout(() => {
    retryTimer = undefined
    retryAt = Number.POSITIVE_INFINITY
    deliverQueuedMail().catch(error => console.error('[fourfold] queued mail could not be delivered; tried again later:', error))
  }, Math.max(0, at - Date.now()))
  retryTimer.unref()
}

type Row = { id: string, kind: MailKind, recipient: string, subject: string, text: string, html: string, digest_send_id: string | null, attempts: number }

/**
 * Sends what is waiting in the outbox (due mails, or the ones named), each by exactly one run,
 * and sets up the next try for whatever the mail server did not take. Safe to call from any
 * number of requests and instances at once.
 */
export async function deliverQueuedMail(options: DeliveryOptions = {}): Promise<DeliveryOutcome> {
  const client = (await useDb()).$client
  const holder = `${PROCESS}:${randomUUID().slice(0, 8)}`
  const now = Date.now()
  const where: string[] = ['(claimed_until is null or claimed_until <= ?)']
  const args: Array<string | number> = [now]
  if (!options.ignoreBackoff) {
    where.push('next_attempt_at <= ?')
    args.push(now)
  }
  if (options.ids) {
    if (!options.ids.length) return { sent: 0, notSent: 0 }
    where.push(`id in (${options.ids.map(() => '?').join(',')})`)
    args.push(...options.ids)
  }
  if (options.organisationId) {
    where.push('organisation_id = ?')
    args.push(options.organisationId)
  }
  const [expired, crashedDigests, claim] = await serialiseWrite(() => client.batch([
    { sql: 'delete from mail_outbox where expires_at <= ? returning kind, recipient', args: [now] },
    // A digest whose run died mid-send may have arrived: at most once a day, so it is not sent again.
    { sql: 'delete from mail_outbox where kind = \'digest\' and claimed_until is not null and claimed_until <= ? returning recipient', args: [now] },
    {
      sql: `update mail_outbox set claimed_by = ?, claimed_until = ?
            where id in (select id from mail_outbox where ${where.join(' and ')} order by created_at limit ${BATCH})
            returning id, kind, recipient, subject, text, html, digest_send_id, attempts`,
      args: [holder, now + SEND_CLAIM_MS, ...args],
    },
  ], 'write'))
  for (const r of expired!.rows) console.warn(`[fourfold] a ${r.kind} mail to ${r.recipient} was not sent before it expired; it was dropped.`)
  for (const r of crashedDigests!.rows) console.warn(`[fourfold] the digest to ${r.recipient} may not have arrived (a run stopped while sending it); it is not sent twice.`)

  const outcome: DeliveryOutcome = { sent: 0, notSent: 0 }
  for (const row of claim!.rows as unknown as Row[]) {
    try {
      await sendMail({ to: row.recipient, subject: row.subject, text: row.text, html: row.html })
    }
    catch (error) {
      outcome.notSent += 1
      await settleFailure(client, row, holder, error)
      continue
    }
    outcome.sent += 1
    const statements: InStatement[] = [{ sql: 'delete from mail_outbox where id = ?', args: [row.id] }]
    if (row.digest_send_id) statements.push({ sql: 'update digest_sends set sent_at = ? where id = ?', args: [Date.now(), row.digest_send_id] })
    await serialiseWrite(() => client.batch(statements, 'write'))
  }

  if (outcome.sent && !options.ignoreBackoff) {
    // The mail server answers again: what waits on a backoff need not wait any longer.
    setImmediate(() => void deliverQueuedMail({ ignoreBackoff: true }).catch(error => console.error('[fourfold] queued mail could not be delivered:', error)))
  }
  await armRetry(client)
  return outcome
}

async function settleFailure(client: Db['$client'], row: Row, holder: string, error: unknown) {
  const attempts = Number(row.attempts) + 1
  const refusedForGood = isPermanentRefusal(error) && attempts >= PERMANENT_REFUSALS
  const reason = String((error as Error)?.message ?? error).slice(0, 500)
  if (refusedForGood) {
    console.error(`[fourfold] the mail server refused a ${row.kind} mail to ${row.recipient} ${attempts} times; it was dropped:`, reason)
    await serialiseWrite(() => client.execute({ sql: 'delete from mail_outbox where id = ? and claimed_by = ?', args: [row.id, holder] }))
    return
  }
  const delay = mailRetryDelay(attempts)
  console.error(`[fourfold] a ${row.kind} mail to ${row.recipient} was not sent (try ${attempts}); it stays queued and is tried again in ${Math.round(delay / 1000)} s:`, reason)
  await serialiseWrite(() => client.execute({
    sql: 'update mail_outbox set attempts = ?, next_attempt_at = ?, last_error = ?, claimed_by = null, claimed_until = null where id = ? and claimed_by = ?',
    args: [attempts, Date.now() + delay, reason, row.id, holder],
  }))
}

/** Sets this process's timer for the earliest mail still waiting (a claim counts from its expiry). */
async function armRetry(client: Db['$client']) {
  const next = (await client.execute('select min(case when claimed_until is not null then claimed_until else next_attempt_at end) as at from mail_outbox')).rows[0]?.at
  if (next !== null && next !== undefined) retryAtTime(Number(next))
}
