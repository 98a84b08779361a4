// Replays a lesson's events against its pinned breakdown: passes, marks, recited order,
// scores and the readiness suggestion. The tablet shows these live; the server stores them at sync.
import type { BreakdownContent } from '../schemas/breakdown'
import { effectiveEvents, isMarkValue, parsePassKey, type LessonEvent, type PassType } from './lesson-events'
import { orderScore } from './order-metrics'
import { passScore, recallScore, roundScore, type MarkValue } from './scoring'

export interface BreakdownElements {
  steps: Array<{ id: string, text: string }>
  keyPoints: Array<{ id: string, stepId: string, text: string, reason: string, safety: boolean }>
}

export function elementsOf(content: BreakdownContent): BreakdownElements {
  const steps = content.units.flatMap(u => u.steps)
  return {
    steps: steps.map(s => ({ id: s.id, text: s.text })),
    keyPoints: steps.flatMap(s => s.keyPoints.map(k => ({ id: k.id, stepId: s.id, text: k.text, reason: k.reason, safety: k.kind === 'safety' }))),
  }
}

/** Elements of a pass: steps in P1–P3, T1 and T2; key points in T3; reasons (by key point id) in T4. */
export function passElementIds(type: PassType, elements: BreakdownElements): string[] {
  if (type === 'T3') return elements.keyPoints.map(k => k.id)
  if (type === 'T4') return elements.keyPoints.filter(k => k.reason.trim()).map(k => k.id)
  return elements.steps.map(s => s.id)
}

export interface PassState {
  key: string
  type: PassType
  number: number
  closed: boolean
  marks: Map<string, MarkValue>
  /** T2: step ids in the order the learner named them. */
  recited: string[]
  /** P1–P3: steps the coach marked presented. */
  presented: Set<string>
  score: number | null
  orderScore: number | null
}

export interface RepresentItem {
  elementId: string
  level: 'step' | 'keyPoint' | 'reason'
  text: string
  safety: boolean
  why: 'missed' | 'cued' | 'order' | 'safety-not-unaided' | 'not-tried'
}

export interface LessonState {
  passes: PassState[]
  latest: Partial<Record<PassType, PassState>>
  scores: { T1: number | null, T2: number | null, T3: number | null, T4: number | null, order: number | null, recall: number | null }
  readiness: { suggestion: 'ready' | 'another-pass', represent: RepresentItem[] }
}

export function replayLesson(events: readonly LessonEvent[], content: BreakdownContent): LessonState {
  const elements = elementsOf(content)
  const stepOrder = elements.steps.map(s => s.id)
  const passes = new Map<string, PassState>()
  const pass = (key: string): PassState | null => {
    const parsed = parsePassKey(key)
    if (!parsed) return null
    let p = passes.get(key)
    if (!p) {
      p = { key, type: parsed.type, number: parsed.number, closed: false, marks: new Map(), recited: [], presented: new Set(), score: null, orderScore: null }
      passes.set(key, p)
    }
    return p
  }

  // Each pass type's elements once, not once per event: a lesson can hold thousands of events.
  const idsOfType = new Map<PassType, Set<string>>()
  const idsOf = (type: PassType) => {
    let ids = idsOfType.get(type)
    if (!ids) idsOfType.set(type, ids = new Set(passElementIds(type, elements)))
    return ids
  }

  for (const e of effectiveEvents(events)) {
    // A second coach's marks are compared with these (shared/utils/agreement.ts), never scored,
    // and must not even open a pass of the lesson.
    if (e.kind === 'undo' || e.kind === 'observer-mark') continue
    const p = pass(e.pass)
    if (!p) continue
    switch (e.kind) {
      case 'pass-open':
        break
      case 'pass-close':
        p.closed = true
        break
      case 'mark':
        if (e.elementId && idsOf(p.type).has(e.elementId) && isMarkValue(e.value) && p.type.startsWith('T')) p.marks.set(e.elementId, e.value)
        break
      case 'present':
        if (e.elementId && idsOf(p.type).has(e.elementId) && p.type.startsWith('P')) p.presented.add(e.elementId)
        break
      case 'order':
        if (p.type === 'T2' && e.elementId && stepOrder.includes(e.elementId) && !p.recited.includes(e.elementId)) p.recited.push(e.elementId)
        break
      case 'order-all':
        if (p.type === 'T2') p.recited = [...stepOrder]
        break
    }
  }

  const list = [...passes.values()].sort((a, b) => (a.type === b.type ? a.number - b.number : a.type < b.type ? -1 : 1))
  const latest: LessonState['latest'] = {}
  for (const p of list) {
    p.score = roundScore(passScore(passElementIds(p.type, elements), p.marks))
    if (p.type === 'T2') p.orderScore = roundScore(orderScore(stepOrder, p.recited))
    if (!latest[p.type] || latest[p.type]!.number < p.number) latest[p.type] = p
  }
  const T = (t: 'T1' | 'T2' | 'T3' | 'T4') => latest[t]?.score ?? null
  const scores = { T1: T('T1'), T2: T('T2'), T3: T('T3'), T4: T('T4'), order: latest.T2?.orderScore ?? null, recall: roundScore(recallScore({ T2: T('T2'), T3: T('T3'), T4: T('T4') })) }
  return { passes: list, latest, scores, readiness: readiness(latest, elements, stepOrder) }
}

/**
 * `ready` needs a latest pass of each of T1–T4, no miss in them, every safety key point unaided in
 * the latest T3 and its reason not missed in the latest T4, and the steps named in order in T2.
 * Otherwise `another-pass`, with what to re-present, safety first.
 */
function readiness(latest: LessonState['latest'], elements: BreakdownElements, stepOrder: string[]): LessonState['readiness'] {
  const represent: RepresentItem[] = []
  const seen = new Set<string>()
  const add = (item: RepresentItem) => {
    const key = `${item.level}:${item.elementId}`
    if (!seen.has(key)) {
      seen.add(key)
      represent.push(item)
    }
  }
  const stepText = new Map(elements.steps.map(s => [s.id, s.text]))
  const kpById = new Map(elements.keyPoints.map(k => [k.id, k]))
  // A pass type with nothing in it (no key points, no reasons) cannot be tried and is not required.
  const missingPass = (['T1', 'T2', 'T3', 'T4'] as const).filter(t => !latest[t] && passElementIds(t, elements).length > 0)

  for (const type of ['T1', 'T2', 'T3', 'T4'] as const) {
    const p = latest[type]
    const ids = passElementIds(type, elements)
    for (const id of ids) {
      const level = type === 'T3' ? 'keyPoint' : type === 'T4' ? 'reason' : 'step'
      const kp = kpById.get(id)
      const text = level === 'step' ? stepText.get(id)! : level === 'keyPoint' ? kp!.text : kp!.reason
      const safety = level !== 'step' && !!kp?.safety
      const mark = p ? p.marks.get(id) ?? 'missed' : undefined
      if (!p) continue
      if (mark === 'missed') add({ elementId: id, level, text, safety, why: 'missed' })
      else if (type === 'T3' && safety && mark !== 'unaided') add({ elementId: id, level, text, safety, why: 'safety-not-unaided' })
    }
  }
  const t2 = latest.T2
  if (t2 && orderScore(stepOrder, t2.recited) < 100) {
    for (const id of stepOrder) add({ elementId: id, level: 'step', text: stepText.get(id)!, safety: false, why: 'order' })
  }
  for (const type of missingPass) {
    for (const id of passElementIds(type, elements)) {
      const kp = kpById.get(id)
      const level = type === 'T3' ? 'keyPoint' : type === 'T4' ? 'reason' : 'step'
      add({ elementId: id, level, text: level === 'step' ? stepText.get(id)! : level === 'keyPoint' ? kp!.text : kp!.reason, safety: level !== 'step' && !!kp?.safety, why: 'not-tried' })
    }
  }
  // Safety first, then in the breakdown's order.
  represent.sort((a, b) => Number(b.safety) - Number(a.safety))
  return { suggestion: represent.length === 0 && missingPass.length === 0 ? 'ready' : 'another-pass', represent }
}

export function nextPassNumber(state: LessonState, type: PassType): number {
  return (state.latest[type]?.number ?? 0) + 1
}
