// Outgoing mail through nodemailer. With SMTP_URL set it goes to that server;
// without it, to the local capture server (mail-capture.ts), started on first use.
// Routes do not call sendMail themselves: they queue the mail (mail-outbox.ts), which sends it.
import nodemailer from 'nodemailer'
import type { Transporter } from 'nodemailer'

let transport: Promise<Transporter> | undefined

export function smtpUrl(): string {
  return process.env.SMTP_URL || useRuntimeConfig().smtpUrl || ''
}

export function mailIsCaptured(): boolean {
  return !smtpUrl()
}

export function mailTransport(): Promise<Transporter> {
  transport ??= (async () => {
    const url = smtpUrl()
    // Bounded waits, so a mail server that accepts connections but never answers cannot hold a
    // request (or a run of the outbox, mail-outbox.ts) for nodemailer's default two minutes.
    if (url) return nodemailer.createTransport({ url, connectionTimeout: 10_000, greetingTimeout: 10_000, socketTimeout: 30_000 })
    const port = await startMailCapture(mailDirectory())
    return nodemailer.createTransport({ host: '127.0.0.1', port, secure: false, ignoreTLS: true })
  })().catch((error) => {
    transport = undefined
    throw error
  })
  return transport
}

export interface OutgoingMail { to: string, subject: string, text: string, html: string }

export async function sendMail(mail: OutgoingMail) {
  const from = process.env.MAIL_FROM || useRuntimeConfig().mailFrom
  const transporter = await mailTransport()
  await transporter.sendMail({ from, ...mail })
}

/** Absolute link into the app. Built from configuration, never from the request's Host header. */
export function appLink(path: string): string {
  const base = (process.env.APP_URL || useRuntimeConfig().appUrl || 'http://localhost:3000').replace(/\/$/, '')
  return `${base}${path}`
}
