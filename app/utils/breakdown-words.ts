// Words for jobs and breakdowns on screen: statuses, hazards, dates, error paths. Pure helpers.
import { HAZARD_CATEGORY_LABELS, VERSION_STATUS_LABELS, type HazardCategory, type VersionStatus } from '#shared/types/breakdown'
import type { ApiDate, JobListItem, RouteError } from '~/types/jobs'
import { clockTime, shortDate } from '~/utils/date-words'

/** A date as the API or a screen holds it. */
type DateInput = ApiDate | Date | number | null | undefined

/**
 * A date formatter made on first use, not at import: the first Intl.DateTimeFormat a page makes
 * loads the browser's locale data, about 40 ms of main thread (nearer 160 ms on a slow tablet),
 * and every page that imports these words would otherwise pay it while it loads. For forms that
 * date-words.ts does not spell out (a weekday, a long month with the time).
 */
export function lazyDateFormat(options: Intl.DateTimeFormatOptions, locale = 'en-GB'): (d: DateInput) => string {
  let format: Intl.DateTimeFormat | undefined
  return dateIn(at => (format ??= new Intl.DateTimeFormat(locale, options)).format(at))
}

/** Writes a date with `words`; nothing for a missing or unreadable one. */
function dateIn(words: (at: Date) => string): (d: DateInput) => string {
  return (d) => {
    if (d == null) return ''
    const at = new Date(d)
    return Number.isNaN(at.getTime()) ? '' : words(at)
  }
}

/** "3 Dec 2026" */
export const formatDate = dateIn(shortDate)
/** "3 Dec 2026, 14:05" */
export const formatDateTime = dateIn(at => `${shortDate(at)}, ${clockTime(at)}`)
/** "14:05" */
export const formatTime = dateIn(clockTime)

export type Tone = 'done' | 'attention' | 'problem' | 'plain' | 'action'

/** Tailwind classes for a status badge: colour is the second cue, the word is the first. */
export const TONE_CLASSES: Record<Tone, string> = {
  done: 'border-fern-600 bg-fern-50 text-fern-800',
  attention: 'border-saffron-600 bg-saffron-50 text-saffron-800',
  problem: 'border-brick-600 bg-brick-50 text-brick-800',
  action: 'border-harbour-500 bg-harbour-50 text-harbour-800',
  plain: 'border-paper-edge bg-paper-deep text-ink',
}

export function jobStatusWords(job: Pick<JobListItem, 'archivedAt' | 'published' | 'draft'>): Array<{ text: string, tone: Tone }> {
  if (job.archivedAt) return [{ text: 'Archived', tone: 'plain' }]
  const out: Array<{ text: string, tone: Tone }> = []
  if (job.published) out.push({ text: `Published v${job.published.number}`, tone: 'done' })
  if (job.draft) out.push({ text: 'Draft in progress', tone: 'attention' })
  if (!out.length) out.push({ text: 'No breakdown yet', tone: 'problem' })
  return out
}

export const VERSION_TONES: Record<VersionStatus, Tone> = { draft: 'attention', published: 'done', retired: 'plain' }

export function versionWords(v: { status: VersionStatus, number: number }): string {
  return `${VERSION_STATUS_LABELS[v.status]} v${v.number}`
}

export function hazardWords(hazards: ReadonlyArray<{ category: HazardCategory }>): string {
  const names = [...new Set(hazards.map(h => HAZARD_CATEGORY_LABELS[h.category] ?? h.category))]
  return names.join(', ')
}

const PATH_WORDS: Record<string, string> = {
  units: 'unit',
  steps: 'step',
  keyPoints: 'key point',
  hazards: 'hazard',
  ppe: 'PPE line',
  toolsAndMaterials: 'tool or material line',
  workplaceArrangement: 'workplace arrangement',
  coverageTarget: 'coverage target',
  workAreaName: 'work area',
  photoId: 'photo',
  changeNote: 'change note',
  formatVersion: 'format version',
}

/** `breakdown.units.0.steps.2.text` → "breakdown › unit 1 › step 3 › text", for people reading an error. */
export function readablePath(path: string): string {
  if (!path || path === '_form') return 'The file'
  const parts = path.split('.')
  const words: string[] = []
  for (let i = 0; i < parts.length; i++) {
    const part = parts[i]!
    const next = parts[i + 1]
    if (PATH_WORDS[part] && next !== undefined && /^\d+$/.test(next)) {
      words.push(`${PATH_WORDS[part]} ${Number(next) + 1}`)
      i++
    }
    else {
      words.push(PATH_WORDS[part] ?? part)
    }
  }
  const text = words.join(' › ')
  return text.charAt(0).toUpperCase() + text.slice(1)
}

/** Status, message and field errors of a failed $fetch, in one shape. No status means no answer (offline). */
export function routeError(error: unknown): { status: number | null, message: string, fieldErrors: Record<string, string[]>, data: NonNullable<NonNullable<RouteError['data']>['data']> } {
  const e = (error ?? {}) as RouteError
  const status = e.statusCode ?? e.status ?? null
  const data = e.data?.data ?? {}
  const message = data.message ?? e.data?.message
    ?? (status ? 'Something went wrong. Try again.' : 'No connection to the server. Check the network and try again.')
  return { status, message, fieldErrors: data.fieldErrors ?? {}, data }
}

/** The whole breakdown as plain text, to copy somewhere safe (after a conflict, for instance). */
export function breakdownAsText(content: { units: Array<{ title: string, steps: Array<{ text: string, keyPoints: Array<{ kind: string, text: string, reason: string }> }> }> }): string {
  const lines: string[] = []
  const many = content.units.length > 1
  content.units.forEach((unit, u) => {
    if (many || unit.title) lines.push(`Unit ${u + 1}: ${unit.title}`)
    unit.steps.forEach((step, s) => {
      lines.push(`${s + 1}. ${step.text}`)
      for (const kp of step.keyPoints) {
        lines.push(`   - ${kp.kind}: ${kp.text}`)
        if (kp.reason) lines.push(`     reason: ${kp.reason}`)
      }
    })
    lines.push('')
  })
  return lines.join('\n').trim()
}
