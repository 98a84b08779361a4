// Compare two versions of a breakdown by lineage id: what was added, removed, reworded or moved.
// "Moved" is decided with a longest common subsequence (diff-sequences, Jest's Myers diff) over the
// siblings both versions share, so one step moved up does not mark every step below it as moved.
import diffSequencesExport from 'diff-sequences'
import type { BreakdownContent } from '../schemas/breakdown'

export type DiffLevel = 'unit' | 'step' | 'keyPoint'
export type DiffChange = 'reworded' | 'moved' | 'kind' | 'reason' | 'photo'

export interface DiffSide { text: string, kind?: string, reason?: string, position: string }

export interface DiffEntry {
  id: string
  level: DiffLevel
  depth: 0 | 1 | 2
  status: 'same' | 'added' | 'removed' | 'changed'
  changes: DiffChange[]
  before: DiffSide | null
  after: DiffSide | null
}

interface Flat {
  id: string
  level: DiffLevel
  parentId: string
  text: string
  kind?: string
  reason?: string
  photoId?: string | null
  position: string
}

function flatten(content: BreakdownContent): { order: Flat[], byId: Map<string, Flat>, children: Map<string, string[]> } {
  const order: Flat[] = []
  const children = new Map<string, string[]>()
  const withUnits = content.units.length > 1
  const push = (f: Flat) => {
    order.push(f)
    children.set(f.parentId, [...(children.get(f.parentId) ?? []), f.id])
  }
  content.units.forEach((unit, u) => {
    const unitLabel = withUnits ? `Unit ${u + 1}` : ''
    push({ id: unit.id, level: 'unit', parentId: 'root', text: unit.title, position: unitLabel || 'Breakdown' })
    unit.steps.forEach((step, s) => {
      const stepLabel = `${unitLabel ? `${unitLabel}, step` : 'Step'} ${s + 1}`
      push({ id: step.id, level: 'step', parentId: unit.id, text: step.text, photoId: step.photoId, position: stepLabel })
      step.keyPoints.forEach((kp, k) => {
        push({ id: kp.id, level: 'keyPoint', parentId: step.id, text: kp.text, kind: kp.kind, reason: kp.reason, photoId: kp.photoId, position: `${stepLabel}, key point ${k + 1}` })
      })
    })
  })
  return { order, byId: new Map(order.map(f => [f.id, f])), children }
}

// diff-sequences is CommonJS with `exports.default`: bundlers hand over the function, while Node's
// own ESM loader (the Nitro server) hands over the exports object holding it.
const diffSequences = ((diffSequencesExport as unknown as { default?: typeof diffSequencesExport }).default ?? diffSequencesExport)

/** Ids that kept their parent but not their place among the siblings both versions share. */
function movedAmongSiblings(older: string[], newer: string[], keep: (id: string) => boolean): Set<string> {
  const a = older.filter(keep)
  const b = newer.filter(keep)
  const inOrder = new Set<string>()
  diffSequences(a.length, b.length, (i, j) => a[i] === b[j], (n, i) => {
    for (let k = 0; k < n; k++) inOrder.add(a[i + k]!)
  })
  return new Set(b.filter(id => !inOrder.has(id)))
}

const DEPTH: Record<DiffLevel, 0 | 1 | 2> = { unit: 0, step: 1, keyPoint: 2 }

function side(f: Flat): DiffSide {
  return { text: f.text, kind: f.kind, reason: f.reason, position: f.position }
}

export function diffBreakdowns(olderContent: BreakdownContent, newerContent: BreakdownContent): DiffEntry[] {
  const older = flatten(olderContent)
  const newer = flatten(newerContent)

  const moved = new Set<string>()
  for (const f of newer.order) {
    const o = older.byId.get(f.id)
    if (o && o.parentId !== f.parentId) moved.add(f.id)
  }
  for (const [parentId, newerIds] of newer.children) {
    const olderIds = older.children.get(parentId) ?? []
    const shared = (id: string) => older.byId.get(id)?.parentId === parentId && newer.byId.get(id)?.parentId === parentId
    for (const id of movedAmongSiblings(olderIds, newerIds, shared)) moved.add(id)
  }

  const entryFor = (id: string): DiffEntry => {
    const o = older.byId.get(id)
    const n = newer.byId.get(id)
    const f = (n ?? o)!
    if (!o) return { id, level: f.level, depth: DEPTH[f.level], status: 'added', changes: [], before: null, after: side(n!) }
    if (!n) return { id, level: f.level, depth: DEPTH[f.level], status: 'removed', changes: [], before: side(o), after: null }
    const changes: DiffChange[] = []
    if (o.text !== n.text) changes.push('reworded')
    if (moved.has(id)) changes.push('moved')
    if (o.kind !== n.kind) changes.push('kind')
    if ((o.reason ?? '') !== (n.reason ?? '')) changes.push('reason')
    if ((o.photoId ?? null) !== (n.photoId ?? null)) changes.push('photo')
    return { id, level: f.level, depth: DEPTH[f.level], status: changes.length ? 'changed' : 'same', changes, before: side(o), after: side(n) }
  }

  // Display order: the newer tree, with each removed element placed after the nearest older
  // sibling that stayed in place (or first, when none did).
  const anchorOf = new Map<string, string | null>()
  for (const [parentId, olderIds] of older.children) {
    let anchor: string | null = null
    for (const childId of olderIds) {
      const n = newer.byId.get(childId)
      if (!n) anchorOf.set(childId, anchor)
      else if (n.parentId === parentId && !moved.has(childId)) anchor = childId
    }
  }
  const out: DiffEntry[] = []
  const emitted = new Set<string>()
  const emitRemovedSubtree = (id: string) => {
    if (emitted.has(id)) return
    emitted.add(id)
    out.push(entryFor(id))
    for (const child of older.children.get(id) ?? []) if (!newer.byId.has(child)) emitRemovedSubtree(child)
  }
  const emitRemovedAfter = (parentId: string, anchor: string | null) => {
    for (const childId of older.children.get(parentId) ?? []) {
      if (!newer.byId.has(childId) && anchorOf.get(childId) === anchor) emitRemovedSubtree(childId)
    }
  }
  const walk = (parentId: string) => {
    emitRemovedAfter(parentId, null)
    for (const id of newer.children.get(parentId) ?? []) {
      emitted.add(id)
      out.push(entryFor(id))
      walk(id)
      emitRemovedAfter(parentId, id)
    }
  }
  walk('root')
  // Removed elements whose parent is gone too are emitted with it; anything left goes last.
  for (const f of older.order) if (!newer.byId.has(f.id) && !emitted.has(f.id)) emitRemovedSubtree(f.id)
  return out
}

export interface DiffSummary { added: number, removed: number, reworded: number, moved: number, otherChanges: number }

export function summariseDiff(entries: readonly DiffEntry[]): DiffSummary {
  return {
    added: entries.filter(e => e.status === 'added').length,
    removed: entries.filter(e => e.status === 'removed').length,
    reworded: entries.filter(e => e.changes.includes('reworded')).length,
    moved: entries.filter(e => e.changes.includes('moved')).length,
    otherChanges: entries.filter(e => e.status === 'changed' && !e.changes.includes('reworded') && !e.changes.includes('moved')).length,
  }
}
