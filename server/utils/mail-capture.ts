// The local stand-in for a mail server: when SMTP_URL is unset, an SMTP server on
// 127.0.0.1 accepts every message and keeps it under the mail directory as the raw
// .eml plus a .json summary (recipients, subject, text, links) for people and tests. The envelope
// (MAIL FROM / RCPT TO) is kept too: it is who the mail really went to, whatever the headers say.
import { mkdir, readdir, readFile, writeFile } from 'node:fs/promises'
import { resolve } from 'node:path'
import { randomUUID } from 'node:crypto'
import { SMTPServer } from 'smtp-server'
import { simpleParser } from 'mailparser'
import { linksIn } from './mail-links'

export interface CapturedMail {
  id: string
  date: string
  from: string
  to: string[]
  subject: string
  text: string
  html: string
  links: string[]
  envelope: { from: string, to: string[] }
}

export function mailDirectory(): string {
  return resolve(process.env.MAIL_DIR || useRuntimeConfig().mailDir || '.data/mail')
}

export async function startMailCapture(dir: string): Promise<number> {
  await mkdir(dir, { recursive: true })
  const server = new SMTPServer({
    authOptional: true,
    disabledCommands: ['STARTTLS', 'AUTH'],
    logger: false,
    size: 5 * 1024 * 1024,
    onData(stream, session, callback) {
      const chunks: Buffer[] = []
      stream.on('data', (chunk: Buffer) => chunks.push(chunk))
      stream.on('end', async () => {
        try {
          const raw = Buffer.concat(chunks)
          const parsed = await simpleParser(raw)
          const id = `${Date.now()}-${randomUUID().slice(0, 8)}`
          const to = [parsed.to].flat().flatMap(a => a?.value ?? []).map(a => a.address ?? '').filter(Boolean)
          const mail: CapturedMail = {
            id,
            date: (parsed.date ?? new Date()).toISOString(),
            from: parsed.from?.text ?? '',
            to,
            subject: parsed.subject ?? '',
            text: parsed.text ?? '',
            html: typeof parsed.html === 'string' ? parsed.html : '',
            links: linksIn(parsed.text ?? ''),
            envelope: {
              from: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
              to: session.envelope.rcptTo.map(r => r.address),
            },
          }
          await writeFile(resolve(dir, `${id}.eml`), raw)
          await writeFile(resolve(dir, `${id}.json`), JSON.stringify(mail, null, 2))
          callback()
        }
        catch (error) {
          callback(error as Error)
        }
      })
    },
  })
  return new Promise((resolvePort, reject) => {
    server.once('error', reject)
    server.listen(0, '127.0.0.1', () => {
      const address = server.server.address()
      resolvePort(typeof address === 'object' && address ? address.port : 0)
    })
  })
}

export async function listCapturedMail(dir = mailDirectory()): Promise<CapturedMail[]> {
  const names = await readdir(dir).catch(() => [] as string[])
  const mails = await Promise.all(names.filter(n => n.endsWith('.json')).map(async n => JSON.parse(await readFile(resolve(dir, n), 'utf8')) as CapturedMail))
  return mails.sort((a, b) => b.id.localeCompare(a.id))
}
