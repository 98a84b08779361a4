// The lesson being run on this tablet: the lesson row, its pinned breakdown version and its events,
// all from IndexedDB (app/utils/localdb.ts), with the state derived by replayLesson. Every tap
// appends an event and the screen shows it recorded only once IndexedDB has committed it.
import { defineStore } from 'pinia'
import type { BreakdownContent } from '#shared/schemas/breakdown'
import { elementsOf, passElementIds, replayLesson } from '#shared/utils/lesson-state'
import { focusContent } from '#shared/utils/refresher'
import { withBreakdownNumbers } from '#shared/utils/refresher-cards'
import { parsePassKey, type PassType } from '#shared/utils/lesson-events'
import { MARK_LABELS, type MarkValue } from '#shared/utils/scoring'
import type { VersionDetail } from '~/types/jobs'
import { saveFailureWords } from '~/utils/storage-full'
import { appendEvent, getLesson, lessonEvents, localDb, updateLesson, type LocalEvent, type LocalLesson, type NewEvent, type OfflineVersion } from '~/utils/localdb'
import { firstOpenIndex, indexAfterMark, lastUndoable, nextPassKey, nextStandardPass, normaliseCursor, openPassOf, passCards, stageOfPass, type RunnerCursor, type RunnerStage } from '#shared/utils/lesson-flow'

type LoadStatus = 'idle' | 'loading' | 'ready' | 'missing' | 'no-version'

export const useLessonStore = defineStore('lesson', () => {
  // Shallow: the row is replaced whole on every change, and IndexedDB cannot store reactive proxies.
  const lesson = shallowRef<LocalLesson | null>(null)
  const version = shallowRef<OfflineVersion | null>(null)
  const learnerName = ref('')
  const events = shallowRef<LocalEvent[]>([])
  const status = ref<LoadStatus>('idle')
  /** Writes waiting for IndexedDB. */
  const pending = ref(0)
  /** What was last written, in words (read out by the live region). */
  const lastSaved = ref('')
  /** A write that failed, in words a coach can act on. */
  const saveError = ref('')

  // A refresher works on the changed elements only, and is scored on them, as the server scores it.
  // The focus array keeps its identity when the row is replaced on a move, so nothing is replayed then.
  const focus = computed(() => lesson.value?.focus ?? null)
  const content = computed<BreakdownContent | null>(() => (version.value ? focusContent(version.value.content, focus.value) : null))
  const elements = computed(() => (content.value ? elementsOf(content.value) : null))
  const state = computed(() => (content.value ? replayLesson(events.value, content.value) : null))
  const readOnly = computed(() => Boolean(lesson.value?.signedOffAt))
  const saving = computed(() => pending.value > 0)
  const cursor = computed<RunnerCursor>(() => {
    if (!state.value || !elements.value) return { stage: 'prepare', pass: null, index: 0 }
    return normaliseCursor(lesson.value?.cursor, state.value, elements.value)
  })
  const currentPass = computed(() => (cursor.value.pass ? state.value?.passes.find(p => p.key === cursor.value.pass) ?? null : null))
  const currentType = computed<PassType | null>(() => (cursor.value.pass ? parsePassKey(cursor.value.pass)?.type ?? null : null))
  const currentIds = computed(() => (currentType.value && elements.value ? passElementIds(currentType.value, elements.value) : []))
  const currentCards = computed(() => {
    if (!currentType.value || !content.value) return []
    const cards = passCards(currentType.value, content.value)
    return focus.value && version.value ? withBreakdownNumbers(cards, version.value.content) : cards
  })
  const currentCard = computed(() => currentCards.value[cursor.value.index] ?? null)

  // Writes run one after another, in the order they were tapped.
  let queue: Promise<unknown> = Promise.resolve()
  function serial<T>(work: () => Promise<T>): Promise<T> {
    const run = queue.then(work, work)
    queue = run.catch(() => undefined)
    return run
  }

  /** Runs one write; `quiet` writes (the cursor, the stage clock) are not announced. */
  async function write<T>(what: string, work: () => Promise<T>, quiet = false): Promise<T | undefined> {
    pending.value += 1
    try {
      const result = await serial(work)
      saveError.value = ''
      if (!quiet) lastSaved.value = what
      return result
    }
    catch (error) {
      saveError.value = saveFailureWords(what, error)
      return undefined
    }
    finally {
      pending.value -= 1
    }
  }

  function reset() {
    lesson.value = null
    version.value = null
    events.value = []
    learnerName.value = ''
    lastSaved.value = ''
    saveError.value = ''
    status.value = 'idle'
  }

  /** The pinned version from the tablet, or (online) from the server when the tablet no longer has it. */
  async function findVersion(row: LocalLesson): Promise<OfflineVersion | null> {
    const local = await localDb().versions.get(row.versionId)
    if (local) return local
    if (typeof navigator !== 'undefined' && !navigator.onLine) return null
    try {
      const v = await $fetch<VersionDetail>(`/api/versions/${row.versionId}`)
      return {
        id: v.id,
        jobId: v.jobId,
        organisationId: row.organisationId,
        number: v.number,
        publishedAt: v.publishedAt == null ? null : new Date(v.publishedAt).getTime(),
        content: v.content,
        job: { title: v.job.title, purpose: v.job.purpose, hazards: v.job.hazards, ppe: v.job.ppe, toolsAndMaterials: v.job.toolsAndMaterials, workplaceArrangement: v.job.workplaceArrangement, workAreaName: v.job.workAreaName },
      }
    }
    catch {
      return null
    }
  }

  /** Opens a lesson from the tablet; `found` hears of it as soon as its own row is read, before the rest. */
  async function load(id: string, found?: (row: LocalLesson) => void) {
    if (lesson.value?.id === id && status.value === 'ready') return
    reset()
    status.value = 'loading'
    const row = await getLesson(id)
    if (!row) {
      status.value = 'missing'
      return
    }
    found?.(row)
    const [pinned, list, learner] = await Promise.all([findVersion(row), lessonEvents(id), localDb().learners.get(row.learnerId)])
    lesson.value = row
    learnerName.value = learner?.name ?? 'Learner not on this tablet'
    events.value = list
    version.value = pinned
    status.value = pinned ? 'ready' : 'no-version'
  }

  /** Appends one event; the screen changes only once it is committed. */
  async function record(input: Omit<NewEvent, 'lessonId'>, what: string): Promise<LocalEvent | undefined> {
    const row = lesson.value
    if (!row || readOnly.value) return undefined
    const event = await write(what, () => appendEvent({ ...input, lessonId: row.id }))
    if (event) events.value = [...events.value, event]
    return event
  }

  /** Saves lesson fields; they show once IndexedDB has them. */
  async function patch(changes: Partial<Omit<LocalLesson, 'id'>>, what: string, options: { evenIfSignedOff?: boolean } = {}): Promise<boolean> {
    const row = lesson.value
    if (!row || (readOnly.value && !options.evenIfSignedOff)) return false
    const now = Date.now()
    const done = await write(what, async () => {
      await updateLesson(row.id, changes, now)
      return true
    })
    if (done && lesson.value?.id === row.id) lesson.value = { ...lesson.value, ...changes, updatedAt: now, synced: 0 }
    return Boolean(done)
  }

  // ---- moving around -------------------------------------------------------------------------

  /** Moves the cursor and saves it at once, so a reload reopens here. A signed-off lesson only looks. */
  async function moveTo(next: RunnerCursor) {
    if (!lesson.value) return
    flushStageTime()
    const row: LocalLesson = { ...lesson.value, cursor: next }
    lesson.value = row
    if (readOnly.value) return
    await write('Place in the lesson', () => updateLesson(row.id, { cursor: next, stageSeconds: row.stageSeconds }), true)
  }

  function goToIndex(index: number) {
    const count = currentIds.value.length
    return moveTo({ ...cursor.value, index: Math.min(Math.max(0, index), Math.max(0, count - 1)) })
  }

  /** Enters a stage where it was left: its open pass at the first element not done, else its overview. */
  function goToStage(stage: RunnerStage) {
    if ((stage === 'present' || stage === 'tryout') && state.value && elements.value) {
      const open = openPassOf(stage, state.value)
      if (open) return moveTo({ stage, pass: open.key, index: firstOpenIndex(open, passElementIds(open.type, elements.value)) })
    }
    return moveTo({ stage, pass: null, index: 0 })
  }

  async function openPass(type: PassType) {
    if (!state.value) return
    const key = nextPassKey(state.value, type)
    const opened = await record({ pass: key, elementId: null, kind: 'pass-open', value: null }, `Pass ${key} started`)
    if (opened) await moveTo({ stage: stageOfPass(type), pass: key, index: 0 })
  }

  /** Closes the current pass and opens the stage's next default pass, or goes to the overview. */
  async function closePass() {
    const pass = currentPass.value
    if (!pass || !state.value || !elements.value) return
    const stage = stageOfPass(pass.type)
    const closed = await record({ pass: pass.key, elementId: null, kind: 'pass-close', value: null }, `Pass ${pass.key} closed`)
    if (!closed) return
    const next = nextStandardPass(stage, state.value, elements.value)
    if (next) await openPass(next)
    else await moveTo({ stage, pass: null, index: 0 })
  }

  // ---- marks ---------------------------------------------------------------------------------

  async function mark(value: MarkValue) {
    const pass = currentPass.value
    const card = currentCard.value
    if (!pass || !card || pass.closed) return
    const label = card.keyPoint ? `${pass.type === 'T4' ? 'Reason' : 'Key point'} ${card.stepNumber}.${card.keyPointNumber}` : `Step ${card.stepNumber}`
    const index = cursor.value.index
    const event = await record({ pass: pass.key, elementId: card.elementId, kind: 'mark', value }, `${label} recorded as ${MARK_LABELS[value]}`)
    if (event && cursor.value.pass === pass.key && cursor.value.index === index) await goToIndex(indexAfterMark(index, currentIds.value.length))
  }

  async function markPresented() {
    const pass = currentPass.value
    const card = currentCard.value
    if (!pass || !card || pass.closed) return
    const index = cursor.value.index
    const event = pass.presented.has(card.elementId)
      ? true
      : await record({ pass: pass.key, elementId: card.elementId, kind: 'present', value: null }, `Step ${card.stepNumber} recorded as presented`)
    if (event && cursor.value.pass === pass.key && cursor.value.index === index && index < currentIds.value.length - 1) await goToIndex(index + 1)
  }

  /** T2: the learner named this step next; the card moves to it so it can be marked. */
  async function nameStep(stepId: string) {
    const pass = currentPass.value
    if (!pass || pass.type !== 'T2' || pass.closed || pass.recited.includes(stepId)) return
    const position = pass.recited.length + 1
    const card = currentCards.value.findIndex(c => c.elementId === stepId)
    const event = await record({ pass: pass.key, elementId: stepId, kind: 'order', value: null }, `Step ${card + 1} named ${position === 1 ? 'first' : `in place ${position}`}`)
    if (event && card >= 0) await goToIndex(card)
  }

  async function allInOrder() {
    const pass = currentPass.value
    if (!pass || pass.type !== 'T2' || pass.closed) return
    await record({ pass: pass.key, elementId: null, kind: 'order-all', value: null }, 'All steps named in order')
  }

  const undoTarget = computed(() => (cursor.value.pass ? lastUndoable(events.value, cursor.value.pass) : null))

  async function undo() {
    const target = undoTarget.value
    const pass = currentPass.value
    if (!target || !pass || pass.closed) return
    const what = target.kind === 'mark' ? `${MARK_LABELS[target.value as MarkValue] ?? 'Mark'} taken back` : target.kind === 'present' ? '"Presented" taken back' : target.kind === 'order-all' ? '"All in order" taken back' : 'Named step taken back'
    const event = await record({ pass: pass.key, elementId: target.elementId, kind: 'undo', value: target.id }, what)
    const at = target.elementId ? currentIds.value.indexOf(target.elementId) : -1
    if (event && at >= 0) await goToIndex(at)
  }

  // ---- lesson fields -------------------------------------------------------------------------

  function setPrepare(key: string, change: { done?: boolean, note?: string }, what: string) {
    const row = lesson.value
    if (!row) return Promise.resolve(false)
    const previous = row.prepare[key] ?? { done: false, note: '' }
    return patch({ prepare: { ...row.prepare, [key]: { ...previous, ...change } } }, what)
  }

  /** The coach's sign-off: from here on the lesson is read-only. The stage clock stops with it. */
  async function signOff() {
    if (!lesson.value || readOnly.value) return false
    flushStageTime()
    const now = Date.now()
    const ok = await patch({ signedOffAt: now, cursor: { stage: 'followup', pass: null, index: 0 }, stageSeconds: lesson.value.stageSeconds }, 'Lesson signed off')
    if (ok) countingSince.value = null
    return ok
  }

  // ---- time in each stage --------------------------------------------------------------------

  /** When this screen began counting the current stage (ms since epoch), or null while hidden. */
  const countingSince = ref<number | null>(null)

  function startCounting() {
    if (!readOnly.value && countingSince.value === null) countingSince.value = Date.now()
  }

  /** Adds the time since counting began to the stage the cursor is in (in memory; saved with the next write). */
  function flushStageTime(now = Date.now()) {
    const row = lesson.value
    if (!row || countingSince.value === null) return
    const stage = cursor.value.stage
    const seconds = Math.max(0, (now - countingSince.value) / 1000)
    countingSince.value = readOnly.value ? null : now
    lesson.value = { ...row, stageSeconds: { ...row.stageSeconds, [stage]: (row.stageSeconds[stage] ?? 0) + seconds } }
  }

  async function saveStageTime() {
    flushStageTime()
    const row = lesson.value
    if (!row || readOnly.value) return
    await write('Time in stage', () => updateLesson(row.id, { stageSeconds: row.stageSeconds }), true)
  }

  function stopCounting() {
    flushStageTime()
    countingSince.value = null
  }

  function stageSeconds(now: number): number {
    const row = lesson.value
    if (!row) return 0
    const base = row.stageSeconds[cursor.value.stage] ?? 0
    return base + (countingSince.value === null ? 0 : Math.max(0, (now - countingSince.value) / 1000))
  }

  return {
    lesson, version, learnerName, events, status, saving, lastSaved, saveError,
    focus, content, elements, state, readOnly, cursor, currentPass, currentType, currentIds, currentCards, currentCard, undoTarget,
    load, reset, record, patch, signOff, moveTo, goToIndex, goToStage, openPass, closePass, mark, markPresented, nameStep, allInOrder, undo, setPrepare,
    startCounting, stopCounting, flushStageTime, saveStageTime, stageSeconds,
  }
})
