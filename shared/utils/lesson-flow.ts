// The lesson runner's pure rules: stages and passes in their order, what one card of a pass shows,
// where the cursor may stand, what "undo" takes back, and the words the runner shows for them.
// No Vue, no Dexie: the store and the screens call these, the unit tests check them.
import type { BreakdownContent, BreakdownKeyPoint, BreakdownStep } from '../schemas/breakdown'
import { compareEvents, effectiveEvents, parsePassKey, passKey, type LessonEvent, type PassType } from './lesson-events'
import { passElementIds, type BreakdownElements, type LessonState, type PassState, type RepresentItem } from './lesson-state'
import { MARK_LABELS, type MarkValue } from './scoring'

export type RunnerStage = 'prepare' | 'present' | 'tryout' | 'followup'
export interface RunnerCursor { stage: RunnerStage, pass: string | null, index: number }

export const RUNNER_STAGES: readonly RunnerStage[] = ['prepare', 'present', 'tryout', 'followup']

/** The trade's names of the four steps (DESIGN.md §3). */
export const STAGE_LABELS: Record<RunnerStage, string> = {
  prepare: 'Prepare the worker',
  present: 'Present the operation',
  tryout: 'Try-out performance',
  followup: 'Follow up',
}

export const STAGE_SHORT_LABELS: Record<RunnerStage, string> = {
  prepare: 'Prepare',
  present: 'Present',
  tryout: 'Try out',
  followup: 'Follow up',
}

/** What each pass asks (DESIGN.md §3, "pass"). */
export const PASS_LABELS: Record<PassType, string> = {
  P1: 'Show and tell the important steps',
  P2: 'Again, stressing the key points',
  P3: 'Again, with the reasons',
  T1: 'The learner does it, silently',
  T2: 'Does it and tells the steps',
  T3: 'Tells the key points',
  T4: 'Tells the reasons',
}

export const STAGE_PASS_TYPES: Record<'present' | 'tryout', readonly PassType[]> = {
  present: ['P1', 'P2', 'P3'],
  tryout: ['T1', 'T2', 'T3', 'T4'],
}

export function stageOfPass(type: PassType): 'present' | 'tryout' {
  return type.startsWith('P') ? 'present' : 'tryout'
}

/**
 * The passes a stage runs by default, leaving out those with nothing to show or ask: P2 and T3
 * need key points, P3 and T4 need a key point with a reason.
 */
export function standardPassTypes(stage: 'present' | 'tryout', elements: BreakdownElements): PassType[] {
  const hasKeyPoints = elements.keyPoints.length > 0
  const hasReasons = elements.keyPoints.some(k => k.reason.trim())
  return STAGE_PASS_TYPES[stage].filter((type) => {
    if (type === 'P2' || type === 'T3') return hasKeyPoints
    if (type === 'P3' || type === 'T4') return hasReasons
    return true
  })
}

/** The next default pass of the stage that has not been opened yet, or null when all have been. */
export function nextStandardPass(stage: 'present' | 'tryout', state: LessonState, elements: BreakdownElements): PassType | null {
  return standardPassTypes(stage, elements).find(type => !state.latest[type]) ?? null
}

/** Passes of one stage, in the order they were run (type, then number). */
export function passesOfStage(stage: 'present' | 'tryout', state: LessonState): PassState[] {
  return state.passes.filter(p => stageOfPass(p.type) === stage)
}

/** The pass of the stage that is open (not closed), newest first: where a return to the stage lands. */
export function openPassOf(stage: 'present' | 'tryout', state: LessonState): PassState | null {
  const open = passesOfStage(stage, state).filter(p => !p.closed)
  return open.sort((a, b) => b.number - a.number || (a.type < b.type ? 1 : -1))[0] ?? null
}

export function nextPassKey(state: LessonState, type: PassType): string {
  return passKey(type, (state.latest[type]?.number ?? 0) + 1)
}

/** One card of a pass: the step it is about and, in T3/T4, the key point. */
export interface PassCard {
  elementId: string
  step: BreakdownStep
  /** 1-based, counted across units. */
  stepNumber: number
  stepCount: number
  unitTitle: string
  unitNumber: number
  unitCount: number
  keyPoint: BreakdownKeyPoint | null
  /** 1-based within its step. */
  keyPointNumber: number | null
}

/** The cards of a pass, in the same order as passElementIds (so index n is element n). */
export function passCards(type: PassType, content: BreakdownContent): PassCard[] {
  const cards: PassCard[] = []
  const stepCount = content.units.reduce((n, u) => n + u.steps.length, 0)
  let stepNumber = 0
  content.units.forEach((unit, u) => {
    for (const step of unit.steps) {
      stepNumber += 1
      const base = { step, stepNumber, stepCount, unitTitle: unit.title, unitNumber: u + 1, unitCount: content.units.length }
      if (type === 'T3' || type === 'T4') {
        step.keyPoints.forEach((keyPoint, k) => {
          if (type === 'T4' && !keyPoint.reason.trim()) return
          cards.push({ ...base, elementId: keyPoint.id, keyPoint, keyPointNumber: k + 1 })
        })
      }
      else {
        cards.push({ ...base, elementId: step.id, keyPoint: null, keyPointNumber: null })
      }
    }
  })
  return cards
}

/**
 * A cursor that points at something that exists: a known stage; in present and try-out a pass
 * that was opened in that stage (or null for the stage's overview); an index inside the pass.
 */
export function normaliseCursor(cursor: Partial<RunnerCursor> | null | undefined, state: LessonState, elements: BreakdownElements): RunnerCursor {
  const stage: RunnerStage = cursor?.stage && RUNNER_STAGES.includes(cursor.stage) ? cursor.stage : 'prepare'
  if (stage === 'prepare' || stage === 'followup') return { stage, pass: null, index: 0 }
  const parsed = cursor?.pass ? parsePassKey(cursor.pass) : null
  const pass = parsed && stageOfPass(parsed.type) === stage && state.passes.some(p => p.key === cursor!.pass) ? cursor!.pass! : null
  if (!pass) return { stage, pass: null, index: 0 }
  const count = passElementIds(parsed!.type, elements).length
  const index = Math.min(Math.max(0, Math.trunc(Number(cursor?.index) || 0)), Math.max(0, count - 1))
  return { stage, pass, index }
}

/** Where to stand after marking element `index`: the next one, or stay on the last. */
export function indexAfterMark(index: number, count: number): number {
  return Math.min(index + 1, Math.max(0, count - 1))
}

/** The first element of a pass not yet marked (or presented), or 0 when all are. */
export function firstOpenIndex(pass: PassState, ids: readonly string[]): number {
  const done = pass.type.startsWith('P') ? (id: string) => pass.presented.has(id) : (id: string) => pass.marks.has(id)
  const i = ids.findIndex(id => !done(id))
  return i < 0 ? 0 : i
}

const UNDOABLE: ReadonlySet<LessonEvent['kind']> = new Set(['mark', 'order', 'order-all', 'present'])

/**
 * The event "Undo" takes back in a pass: the newest mark, order tap, "all in order" or
 * "presented" that is still in effect. Undoing it appends an `undo` event naming it; nothing
 * is deleted, and a second undo takes back the one before.
 */
export function lastUndoable(events: readonly LessonEvent[], pass: string): LessonEvent | null {
  const live = effectiveEvents(events).filter(e => e.pass === pass && UNDOABLE.has(e.kind))
  return live.sort(compareEvents).at(-1) ?? null
}

/** 1-based place at which the learner named each step in T2. */
export function recitedPositions(pass: PassState): Map<string, number> {
  return new Map(pass.recited.map((id, i) => [id, i + 1]))
}

export function ordinal(n: number): string {
  const tens = n % 100
  const suffix = tens >= 11 && tens <= 13 ? 'th' : ({ 1: 'st', 2: 'nd', 3: 'rd' } as Record<number, string>)[n % 10] ?? 'th'
  return `${n}${suffix}`
}

/** "Pass score 83 — 5 of 6 marked": a score with one decimal only when it has one. */
export function passScoreWords(pass: PassState, ids: readonly string[]): string {
  const marked = ids.filter(id => pass.marks.has(id)).length
  const score = pass.score === null ? 'none' : formatScore(pass.score)
  return `Pass score ${score} — ${marked} of ${ids.length} marked`
}

export function presentedWords(pass: PassState, ids: readonly string[]): string {
  const done = ids.filter(id => pass.presented.has(id)).length
  return `${done} of ${ids.length} steps presented`
}

export function formatScore(score: number | null): string {
  if (score === null) return 'none'
  return Number.isInteger(score) ? String(score) : score.toFixed(1)
}

export function markWords(value: MarkValue | undefined): string {
  return value ? MARK_LABELS[value] : 'Not marked yet'
}

export const REPRESENT_WHY_LABELS: Record<RepresentItem['why'], string> = {
  'missed': 'missed',
  'cued': 'needed a cue',
  'order': 'steps named out of order',
  'safety-not-unaided': 'safety key point needed a cue',
  'not-tried': 'not tried yet',
}

export const REPRESENT_LEVEL_LABELS: Record<RepresentItem['level'], string> = {
  step: 'Step',
  keyPoint: 'Key point',
  reason: 'Reason',
}

/**
 * Seconds as a person reads a stopwatch: "0:07", "4:05", "1:02:09".
 */
export function formatElapsed(totalSeconds: number): string {
  const s = Math.max(0, Math.floor(totalSeconds))
  const h = Math.floor(s / 3600)
  const m = Math.floor((s % 3600) / 60)
  const sec = String(s % 60).padStart(2, '0')
  return h ? `${h}:${String(m).padStart(2, '0')}:${sec}` : `${m}:${sec}`
}

/** The same, spelled out for a screen reader: "4 minutes 5 seconds". */
export function elapsedWords(totalSeconds: number): string {
  const s = Math.max(0, Math.floor(totalSeconds))
  const h = Math.floor(s / 3600)
  const m = Math.floor((s % 3600) / 60)
  const sec = s % 60
  const part = (n: number, word: string) => `${n} ${word}${n === 1 ? '' : 's'}`
  return [h ? part(h, 'hour') : '', h || m ? part(m, 'minute') : '', part(sec, 'second')].filter(Boolean).join(' ')
}

/** One tick of stage 1. */
export interface PrepareItem { key: string, group: 'ready' | 'worker', text: string, detail: string }

/**
 * The four items of preparing the worker, as the Job Instruction card (War Manpower Commission,
 * Training Within Industry, 1944) lists them under "Step 1—Prepare the worker"; the card's
 * wording is quoted from memory and put in plain present-day words.
 */
export const PREPARE_WORKER_ITEMS: readonly PrepareItem[] = [
  { key: 'worker:ease', group: 'worker', text: 'Put them at ease', detail: '' },
  { key: 'worker:state-job', group: 'worker', text: 'State the job and find out what they already know about it', detail: '' },
  { key: 'worker:interest', group: 'worker', text: 'Get them interested in learning the job', detail: '' },
  { key: 'worker:position', group: 'worker', text: 'Place them in the correct position', detail: '' },
]

/** Stage 1's ticks for a job: have everything ready (each tool and material, the workplace), then the worker. */
export function prepareItems(job: { toolsAndMaterials: readonly string[], workplaceArrangement: string }): PrepareItem[] {
  const ready: PrepareItem[] = job.toolsAndMaterials.map((text, i) => ({ key: `ready:tool:${i}`, group: 'ready', text, detail: 'Tool or material ready at the workstation' }))
  ready.push({
    key: 'ready:workplace',
    group: 'ready',
    text: 'The workplace is arranged as the job needs',
    detail: job.workplaceArrangement.trim(),
  })
  return [...ready, ...PREPARE_WORKER_ITEMS]
}

/** "T2: Does it and tells the steps", and "(run 2)" from the second run of a type on. */
export function passTitle(pass: { type: PassType, number: number }): string {
  return `${pass.type}: ${PASS_LABELS[pass.type]}${pass.number > 1 ? ` (run ${pass.number})` : ''}`
}

/** The label of a card's element: "Step 3", "Key point 3.2", "Reason 3.2". */
export function cardLabel(card: PassCard, type: PassType): string {
  if (!card.keyPoint) return `Step ${card.stepNumber}`
  return `${type === 'T4' ? 'Reason' : 'Key point'} ${card.stepNumber}.${card.keyPointNumber}`
}
