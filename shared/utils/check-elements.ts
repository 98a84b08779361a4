// What a spot check asks about (DESIGN.md §3, §8; issue 6 item 2). An element of a check is an
// important step (its id), a key point (its id) or a key point's reason (the key point id with
// ":reason"). The suggestion is every safety key point with its reason, plus a sample of the rest,
// drawn with a seeded shuffle (the seed is the check id) so the tablet, the server and the tests
// all get the same list for the same check.
import type { BreakdownContent } from '../schemas/breakdown'

export const REASON_SUFFIX = ':reason'
/** The most elements one check may name (the sync schema's limit too). */
export const MAX_CHECK_ELEMENTS = 500

export interface CheckElement {
  id: string
  level: 'step' | 'keyPoint' | 'reason'
  /** What the coach reads: the step, the key point or the reason. */
  text: string
  /** The important step this element belongs to, for context on the card. */
  stepId: string
  stepText: string
  stepNumber: number
  /** A safety key point or its reason. */
  safety: boolean
  kind: 'quality' | 'safety' | 'knack' | null
  /** For a key point or reason: the key point's own text. */
  keyPointText: string | null
}

/** Every element a check could name, in the breakdown's reading order. */
export function checkableElements(content: BreakdownContent): CheckElement[] {
  const out: CheckElement[] = []
  let stepNumber = 0
  for (const unit of content.units) {
    for (const step of unit.steps) {
      stepNumber += 1
      const base = { stepId: step.id, stepText: step.text, stepNumber }
      out.push({ ...base, id: step.id, level: 'step', text: step.text, safety: false, kind: null, keyPointText: null })
      for (const k of step.keyPoints) {
        const safety = k.kind === 'safety'
        out.push({ ...base, id: k.id, level: 'keyPoint', text: k.text, safety, kind: k.kind, keyPointText: k.text })
        if (k.reason.trim()) out.push({ ...base, id: `${k.id}${REASON_SUFFIX}`, level: 'reason', text: k.reason, safety, kind: k.kind, keyPointText: k.text })
      }
    }
  }
  return out
}

/** The elements of `content` by id. */
export function elementsById(content: BreakdownContent): Map<string, CheckElement> {
  return new Map(checkableElements(content).map(e => [e.id, e]))
}

/** A 32-bit FNV-1a hash of the seed, the start of the generator. */
function hashSeed(seed: string): number {
  let h = 0x811C9DC5
  for (let i = 0; i < seed.length; i++) {
    h ^= seed.charCodeAt(i)
    h = Math.imul(h, 0x01000193)
  }
  return h >>> 0
}

/** mulberry32: a small, well-known 32-bit generator; plenty for picking a sample. */
function generator(seed: string): () => number {
  let a = hashSeed(seed)
  return () => {
    a = (a + 0x6D2B79F5) >>> 0
    let t = a
    t = Math.imul(t ^ (t >>> 15), t | 1)
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61)
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296
  }
}

/** How many of the non-safety elements to sample: a quarter, at least 3, at most 8 (Fourfold's own choice). */
export function sampleSize(available: number): number {
  return Math.min(available, Math.max(3, Math.min(8, Math.ceil(available / 4))))
}

/**
 * The suggested elements of a check: every safety key point and its reason, and a seeded sample of
 * the other steps, key points and reasons; returned in the breakdown's reading order.
 */
export function suggestCheckElements(content: BreakdownContent, seed: string): string[] {
  const all = checkableElements(content)
  const safety = all.filter(e => e.safety)
  const rest = all.filter(e => !e.safety)
  const random = generator(seed)
  // Fisher–Yates shuffle, driven by the seeded generator.
  const shuffled = [...rest]
  for (let i = shuffled.length - 1; i > 0; i--) {
    const j = Math.floor(random() * (i + 1))
    ;[shuffled[i], shuffled[j]] = [shuffled[j]!, shuffled[i]!]
  }
  const chosen = new Set([...safety, ...shuffled.slice(0, sampleSize(rest.length))].map(e => e.id))
  return all.filter(e => chosen.has(e.id)).map(e => e.id)
}

/** The coach's list after adding or taking away one element, kept in reading order. */
export function toggleCheckElement(content: BreakdownContent, chosen: readonly string[], id: string): string[] {
  const set = new Set(chosen)
  if (set.has(id)) set.delete(id)
  else set.add(id)
  return checkableElements(content).filter(e => set.has(e.id)).map(e => e.id)
}
