// What changed between the version a person was trained on and the current one, in words a coach
// reads aloud ("Step 3 reworded: …", "New safety key point on step 2: …"), one line per element.
// Built on diffBreakdowns (lineage ids), so the lines match the compare page and the refresher's focus.
import type { BreakdownContent } from '../schemas/breakdown'
import { diffBreakdowns, type DiffEntry } from './breakdown-diff'
import { focusContent } from './refresher'

export interface ChangeLine {
  id: string
  level: DiffEntry['level']
  status: 'added' | 'removed' | 'changed'
  /** One sentence, e.g. "Step 3 reworded: “Swing the guard open”". */
  words: string
  /** True when a refresher presents and tries out this element (added or changed step or key point). */
  taught: boolean
}

/** Step and key point ids of `newer` that were added or changed since `older` (removed ones cannot be taught). */
export function changedElementIds(older: BreakdownContent, newer: BreakdownContent): string[] {
  return diffBreakdowns(older, newer)
    .filter(e => e.level !== 'unit' && (e.status === 'added' || e.status === 'changed') && e.after)
    .map(e => e.id)
}

const KIND_WORDS: Record<string, string> = { quality: 'quality', safety: 'safety', knack: 'knack' }

function quoted(text: string | undefined): string {
  const t = (text ?? '').trim()
  return t ? `“${t}”` : '(no text)'
}

/** "Step 3, key point 2" → "step 3" (the step part of a key point's position, lower case). */
function stepOf(position: string): string {
  const step = position.replace(/, key point \d+$/, '')
  return step.charAt(0).toLowerCase() + step.slice(1)
}

function kindOf(e: DiffEntry): string {
  const kind = e.after?.kind ?? e.before?.kind ?? ''
  return KIND_WORDS[kind] ?? kind
}

function capitalise(s: string): string {
  return s.charAt(0).toUpperCase() + s.slice(1)
}

function changedWords(e: DiffEntry): string {
  const after = e.after!
  const before = e.before!
  const what: string[] = []
  if (e.changes.includes('reworded')) what.push('reworded')
  if (e.changes.includes('moved')) what.push(`moved (was ${before.position.charAt(0).toLowerCase()}${before.position.slice(1)})`)
  if (e.changes.includes('kind')) what.push(`is now a ${kindOf(e)} key point (was ${KIND_WORDS[before.kind ?? ''] ?? before.kind})`)
  if (e.changes.includes('reason')) what.push('has a new reason')
  if (e.changes.includes('photo')) what.push('has a new photo')
  const list = what.length > 1 ? `${what.slice(0, -1).join(', ')} and ${what[what.length - 1]}` : what[0]
  if (e.level === 'unit') return `${after.position} renamed: ${quoted(after.text)}`
  const tail = e.changes.includes('reason') && !e.changes.includes('reworded') ? `: ${quoted(after.reason)}` : `: ${quoted(after.text)}`
  return `${after.position} ${list}${tail}`
}

function lineWords(e: DiffEntry): string {
  if (e.status === 'added') {
    const a = e.after!
    if (e.level === 'unit') return `New unit: ${quoted(a.text)}`
    if (e.level === 'step') return `New step: ${a.position}, ${quoted(a.text)}`
    return `New ${kindOf(e)} key point on ${stepOf(a.position)}: ${quoted(a.text)}`
  }
  if (e.status === 'removed') {
    const b = e.before!
    if (e.level === 'unit') return `Unit removed: ${quoted(b.text)}`
    if (e.level === 'step') return `Step removed (was ${stepOf(b.position)}): ${quoted(b.text)}`
    return `${capitalise(kindOf(e))} key point removed from ${stepOf(b.position)}: ${quoted(b.text)}`
  }
  return changedWords(e)
}

/** Every element that differs between two versions, in the newer version's order, as words. */
export function changeLines(older: BreakdownContent, newer: BreakdownContent): ChangeLine[] {
  const taught = new Set(changedElementIds(older, newer))
  return diffBreakdowns(older, newer)
    .filter((e): e is DiffEntry & { status: ChangeLine['status'] } => e.status !== 'same')
    // A unit's title is a heading, not something taught; an untitled unit's changes say nothing.
    .filter(e => !(e.level === 'unit' && e.status === 'changed' && !e.changes.includes('reworded')))
    .map(e => ({ id: e.id, level: e.level, status: e.status, words: lineWords(e), taught: taught.has(e.id) }))
}

/**
 * What a refresher works on, counted over focusContent (what the runner shows): "2 steps and 2 key
 * points". A step holding a new key point is presented too, and a changed step brings its key points.
 */
export function focusWords(content: BreakdownContent, focus: readonly string[]): string {
  const steps = focusContent(content, focus).units.flatMap(u => u.steps)
  const kpCount = steps.reduce((n, s) => n + s.keyPoints.length, 0)
  const parts: string[] = []
  if (steps.length) parts.push(`${steps.length} step${steps.length === 1 ? '' : 's'}`)
  if (kpCount) parts.push(`${kpCount} key point${kpCount === 1 ? '' : 's'}`)
  return parts.length ? parts.join(' and ') : 'nothing to teach again'
}
