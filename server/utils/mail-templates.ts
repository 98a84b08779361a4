// Text and HTML bodies of the mails Fourfold sends. Every value is escaped for HTML.
import type { OutgoingMail } from './mail'
import { dayStart, shortDate } from '../../shared/utils/training-status'

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

// ---- The daily reminder digest (server/utils/digest.ts) -----------------------------------

/** At most this many lines per list; the rest is counted and left to the screens. */
export const DIGEST_LIST_LIMIT = 25

export interface DigestMailInput {
  to: string
  name: string
  organisation: string
  now: number
  checks: Array<{ learnerName: string, jobTitle: string, nextCheckAt: number, overdue: boolean }>
  unassignedChecks: Array<{ learnerName: string, jobTitle: string, nextCheckAt: number, overdue: boolean }>
  late: Array<{ learnerName: string, jobTitle: string, targetDate: string, progress: 'not-started' | 'in-training' | 'reteach' }>
  links: { today: string, plan: string, account: string }
}

const LATE_PROGRESS_WORDS = { 'not-started': 'not started', 'in-training': 'in training', 'reteach': 'needs re-teaching' } as const

function plural(n: number, one: string, many: string) {
  return `${n} ${n === 1 ? one : many}`
}

export function digestMail(input: DigestMailInput): OutgoingMail {
  const checkLine = (c: DigestMailInput['checks'][number]) =>
    `${c.learnerName}, ${c.jobTitle}: ${c.overdue ? `overdue since ${shortDate(c.nextCheckAt, input.now)}` : 'due today'}`
  const sections = [
    { title: 'Spot checks due for learners you taught', lines: input.checks.map(checkLine), more: 'on Today' },
    {
      title: 'Spot checks with no coach',
      note: 'Nobody who taught these is a coach here any more. Ask a coach to take them on.',
      lines: input.unassignedChecks.map(checkLine),
      more: 'on Today',
    },
    {
      title: 'Plan items past their target date',
      lines: input.late.map(l => `${l.learnerName}, ${l.jobTitle}: planned by ${shortDate(dayStart(l.targetDate), input.now)}, ${LATE_PROGRESS_WORDS[l.progress]}`),
      more: 'on the plan',
    },
  ].filter(s => s.lines.length > 0).map(s => ({
    ...s,
    heading: `${s.title} (${s.lines.length})`,
    shown: s.lines.slice(0, DIGEST_LIST_LIMIT),
    rest: s.lines.length > DIGEST_LIST_LIMIT ? `… and ${s.lines.length - DIGEST_LIST_LIMIT} more ${s.more}.` : '',
  }))

  const counts = [
    input.checks.length + input.unassignedChecks.length ? plural(input.checks.length + input.unassignedChecks.length, 'spot check due', 'spot checks due') : '',
    input.late.length ? plural(input.late.length, 'plan item late', 'plan items late') : '',
  ].filter(Boolean)
  const subject = `${input.organisation}: ${counts.join(', ')}`
  const greeting = `Hello ${input.name},`
  const intro = `here is what is waiting in ${input.organisation} today.`
  const footer = 'You get this e-mail because the daily digest is on for your account. To stop it, turn it off on your account page:'

  const text = [
    `${greeting}\n${intro}`,
    ...sections.map(s => [s.heading, ...(s.note ? [s.note] : []), ...s.shown.map(l => `- ${l}`), ...(s.rest ? [s.rest] : [])].join('\n')),
    `Open Today: ${input.links.today}\nOpen the plan: ${input.links.plan}`,
    `${footer} ${input.links.account}`,
  ].join('\n\n') + '\n'

  const button = (href: string, label: string) =>
    `<a href="${escapeHtml(href)}" style="display:inline-block;background:#1f3a5f;color:#fff;padding:14px 22px;border-radius:8px;font-size:18px;text-decoration:none;margin:0 12px 12px 0">${escapeHtml(label)}</a>`
  const html = `<!doctype html><html lang="en"><body style="font-family:Arial,sans-serif;color:#1b1f24;background:#fbf8f3;padding:24px">
<h1 style="font-size:24px">${escapeHtml(subject)}</h1>
<p style="font-size:18px;line-height:1.5">${escapeHtml(greeting)} ${escapeHtml(intro)}</p>
${sections.map(s => `<h2 style="font-size:20px;margin-top:24px">${escapeHtml(s.heading)}</h2>
${s.note ? `<p style="font-size:18px;line-height:1.5">${escapeHtml(s.note)}</p>\n` : ''}<ul style="font-size:18px;line-height:1.5">
${s.shown.map(l => `<li>${escapeHtml(l)}</li>`).join('\n')}
</ul>${s.rest ? `\n<p style="font-size:18px">${escapeHtml(s.rest)}</p>` : ''}`).join('\n')}
<p style="margin-top:24px">${button(input.links.today, 'Open Today')}${button(input.links.plan, 'Open the plan')}</p>
<p style="font-size:14px;color:#4a525c">If the buttons do not work, copy these addresses into your browser: ${escapeHtml(input.links.today)} and ${escapeHtml(input.links.plan)}</p>
<p style="font-size:14px;color:#4a525c">${escapeHtml(footer)} <a href="${escapeHtml(input.links.account)}" style="color:#1f3a5f">${escapeHtml(input.links.account)}</a></p>
</body></html>`

  return { to: input.to, subject, text, html }
}
