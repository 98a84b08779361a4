// A lesson's record is an append-only list of events written on the tablet (DESIGN.md §7).
// Replaying them in one agreed order gives the same state on every device and on the server.
import { MARK_VALUES, type MarkValue } from './scoring'
import { byCodeUnits } from './code-order'

// 'observer-mark': a second coach's own mark of the same try-out element, kept apart from the lesson's
// score and compared with the first coach's marks (Cohen's kappa on the review).
export const EVENT_KINDS = ['mark', 'order', 'order-all', 'undo', 'pass-open', 'pass-close', 'present', 'observer-mark'] as const
export type EventKind = (typeof EVENT_KINDS)[number]

export const PASS_TYPES = ['P1', 'P2', 'P3', 'T1', 'T2', 'T3', 'T4'] as const
export type PassType = (typeof PASS_TYPES)[number]
export const TRYOUT_PASS_TYPES = ['T1', 'T2', 'T3', 'T4'] as const satisfies readonly PassType[]
export const PRESENT_PASS_TYPES = ['P1', 'P2', 'P3'] as const satisfies readonly PassType[]

/** A pass key is its type and its number within the lesson: "T2-1", "T3-2". */
export const PASS_KEY = /^(P[1-3]|T[1-4])-([1-9]\d{0,2})$/

export interface LessonEvent {
  id: string
  lessonId: string
  pass: string
  elementId: string | null
  kind: EventKind
  value: string | null
  clientTime: number
  deviceId: string
  seq: number
}

export function passKey(type: PassType, number: number): string {
  return `${type}-${number}`
}

export function parsePassKey(key: string): { type: PassType, number: number } | null {
  const m = PASS_KEY.exec(key)
  return m ? { type: m[1] as PassType, number: Number(m[2]) } : null
}

/** The one order everyone replays in: client time, then device, then the device's own sequence. */
export function compareEvents(a: LessonEvent, b: LessonEvent): number {
  return a.clientTime - b.clientTime || byCodeUnits(a.deviceId, b.deviceId) || a.seq - b.seq || byCodeUnits(a.id, b.id)
}

export function isMarkValue(value: unknown): value is MarkValue {
  return typeof value === 'string' && (MARK_VALUES as readonly string[]).includes(value)
}

/**
 * Events still in effect: an undo cancels its target, and an undo of an undo brings the target
 * back. Undo targets are resolved by id, so the result does not depend on arrival order.
 */
export function effectiveEvents(events: readonly LessonEvent[]): LessonEvent[] {
  const byId = new Map(events.map(e => [e.id, e]))
  const undoneBy = new Map<string, string[]>()
  for (const e of events) {
    if (e.kind === 'undo' && e.value && byId.has(e.value)) undoneBy.set(e.value, [...(undoneBy.get(e.value) ?? []), e.id])
  }
  const memo = new Map<string, boolean>()
  const live = (id: string, depth = 0): boolean => {
    if (memo.has(id)) return memo.get(id)!
    // An event is live unless some live undo targets it (depth guards against forged cycles).
    const result = depth > 50 ? false : !(undoneBy.get(id) ?? []).some(u => live(u, depth + 1))
    memo.set(id, result)
    return result
  }
  return [...events].sort(compareEvents).filter(e => live(e.id))
}
