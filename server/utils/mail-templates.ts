// Text and HTML bodies of the mails Fourfold sends. Every value is escaped for HTML.
import type { OutgoingMail } from './mail'

function escapeHtml(value: string): string {
  return value.replace(/[&<>"']/g, c => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;', '\'': '&#39;' })[c]!)
}

function layout(title: string, paragraphs: string[], link: { href: string, label: string }, footer: string): string {
  const body = paragraphs.map(p => `<p style="font-size:18px;line-height:1.5">${escapeHtml(p)}</p>`).join('\n')
  return `<!doctype html><html lang="en"><body style="font-family:Arial,sans-serif;color:#1b1f24;background:#fbf8f3;padding:24px">
<h1 style="font-size:24px">${escapeHtml(title)}</h1>
${body}
<p><a href="${escapeHtml(link.href)}" style="display:inline-block;background:#1f3a5f;color:#fff;padding:14px 22px;border-radius:8px;font-size:18px;text-decoration:none">${escapeHtml(link.label)}</a></p>
<p style="font-size:14px;color:#4a525c">If the button does not work, copy this address into your browser: ${escapeHtml(link.href)}</p>
<p style="font-size:14px;color:#4a525c">${escapeHtml(footer)}</p>
</body></html>`
}

export function inviteMail(input: { to: string, organisation: string, inviter: string, role: string, link: string, days: number }): OutgoingMail {
  const title = `Join ${input.organisation} on Fourfold`
  const lines = [
    `${input.inviter} has invited you to ${input.organisation} on Fourfold as ${input.role}.`,
    'Open the link to choose your name and password.',
  ]
  const footer = `The link works once and expires in ${input.days} days. If you did not expect this, ignore this message.`
  return {
    to: input.to,
    subject: title,
    text: `${lines.join('\n\n')}\n\n${input.link}\n\n${footer}\n`,
    html: layout(title, lines, { href: input.link, label: 'Accept the invitation' }, footer),
  }
}

export function resetMail(input: { to: string, link: string, minutes: number }): OutgoingMail {
  const title = 'Choose a new Fourfold password'
  const lines = ['Someone asked to reset the password of this Fourfold account.', 'Open the link to choose a new password.']
  const footer = `The link works once and expires in ${input.minutes} minutes. If you did not ask for it, ignore this message: your password stays as it is.`
  return {
    to: input.to,
    subject: title,
    text: `${lines.join('\n\n')}\n\n${input.link}\n\n${footer}\n`,
    html: layout(title, lines, { href: input.link, label: 'Choose a new password' }, footer),
  }
}
