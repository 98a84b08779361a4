// The spot check open in the runner: its row, its pinned breakdown and its marks, all from this
// tablet's IndexedDB (app/utils/local-checks.ts), replayed live with shared/utils/check-state.ts.
// Every tap is committed to IndexedDB before the screen shows it recorded; a reload resumes at
// the first element not yet marked.
import type { BreakdownContent } from '#shared/schemas/breakdown'
import { elementsById, type CheckElement } from '#shared/utils/check-elements'
import { checkResult, replayCheck } from '#shared/utils/check-state'
import { MARK_LABELS, type MarkValue } from '#shared/utils/scoring'
import { localDb, type LocalCheckEvent, type OfflineVersion } from '~/utils/localdb'
import { saveFailureWords } from '~/utils/storage-full'
import { appendCheckEvent, asCheckEvent, eventsOfCheck, getCheck, updateCheck, type SyncedCheck } from '~/utils/local-checks'

type LoadStatus = 'loading' | 'ready' | 'missing' | 'no-version'

export function useCheckRunner() {
  // Shallow: rows are replaced whole, and IndexedDB cannot store reactive proxies.
  const check = shallowRef<SyncedCheck | null>(null)
  const version = shallowRef<OfflineVersion | null>(null)
  const events = shallowRef<LocalCheckEvent[]>([])
  const learnerName = ref('')
  const status = ref<LoadStatus>('loading')
  const index = ref(0)
  const pending = ref(0)
  const lastSaved = ref('')
  const saveError = ref('')

  const content = computed<BreakdownContent | null>(() => version.value?.content ?? null)
  const byId = computed(() => (content.value ? elementsById(content.value) : new Map<string, CheckElement>()))
  /** The chosen elements, in the check's order; an id the version lacks is left out. */
  const elements = computed(() => (check.value?.elements ?? []).map(id => byId.value.get(id)).filter((e): e is CheckElement => Boolean(e)))
  const state = computed(() => replayCheck(events.value.map(asCheckEvent), elements.value.map(e => e.id), check.value?.finishedAt ?? null))
  const current = computed(() => elements.value[index.value] ?? null)
  const currentMark = computed<MarkValue | undefined>(() => (current.value ? state.value.marks.get(current.value.id) : undefined))
  const finished = computed(() => check.value?.finishedAt != null)
  const unmarked = computed(() => elements.value.filter(e => !state.value.marks.has(e.id)).length)
  const result = computed(() => (check.value && content.value && check.value.finishedAt != null
    ? checkResult({ elements: elements.value.map(e => e.id), intervalIndex: check.value.intervalIndex, finishedAt: check.value.finishedAt }, events.value.map(asCheckEvent), content.value)
    : null))
  const saving = computed(() => pending.value > 0)

  let queue: Promise<unknown> = Promise.resolve()
  async function write<T>(what: string, work: () => Promise<T>): Promise<T | undefined> {
    pending.value += 1
    const run = queue.then(work, work)
    queue = run.catch(() => undefined)
    try {
      const value = await run
      saveError.value = ''
      lastSaved.value = what
      return value
    }
    catch (error) {
      saveError.value = saveFailureWords(what, error)
      return undefined
    }
    finally {
      pending.value -= 1
    }
  }

  async function load(id: string) {
    status.value = 'loading'
    const row = await getCheck(id)
    if (!row) {
      status.value = 'missing'
      return
    }
    const [pinned, list, learner] = await Promise.all([localDb().versions.get(row.versionId), eventsOfCheck(id), localDb().learners.get(row.learnerId)])
    check.value = row
    events.value = list
    version.value = pinned ?? null
    learnerName.value = learner?.name ?? 'Learner not on this tablet'
    const first = state.value.firstUnmarked
    index.value = first === -1 ? Math.max(0, elements.value.length - 1) : first
    status.value = pinned ? 'ready' : 'no-version'
  }

  function goTo(i: number) {
    index.value = Math.min(Math.max(0, i), Math.max(0, elements.value.length - 1))
  }

  /** Records a mark, then moves to the next element without one (or the next element). */
  async function mark(value: MarkValue) {
    const row = check.value
    const element = current.value
    if (!row || !element || finished.value) return
    const event = await write(`${MARK_LABELS[value]}: ${element.text}`, () => appendCheckEvent({ checkId: row.id, elementId: element.id, kind: 'mark', value }))
    if (!event) return
    events.value = [...events.value, event]
    check.value = { ...row, updatedAt: event.clientTime }
    const after = elements.value.findIndex((e, i) => i > index.value && !state.value.marks.has(e.id))
    if (after !== -1) goTo(after)
    else if (index.value < elements.value.length - 1) goTo(index.value + 1)
  }

  /** Takes back the newest mark still in effect (a new undo event) and goes to its element. */
  async function undo() {
    const row = check.value
    const target = events.value.find(e => e.id === state.value.lastMarkId)
    if (!row || !target || finished.value) return
    const event = await write('Last mark taken back', () => appendCheckEvent({ checkId: row.id, elementId: null, kind: 'undo', value: target.id }))
    if (!event) return
    events.value = [...events.value, event]
    const at = elements.value.findIndex(e => e.id === target.elementId)
    if (at !== -1) goTo(at)
  }

  async function saveNote(note: string) {
    const row = check.value
    if (!row || finished.value || note === row.note) return
    const now = Date.now()
    const done = await write('Note', async () => {
      await updateCheck(row.id, { note }, now)
      return true
    })
    if (done) check.value = { ...check.value!, note, updatedAt: now, synced: 0 }
  }

  async function finish() {
    const row = check.value
    if (!row || finished.value) return false
    const now = Date.now()
    const done = await write('Spot check finished', async () => {
      await updateCheck(row.id, { finishedAt: now }, now)
      return true
    })
    if (done) check.value = { ...check.value!, finishedAt: now, updatedAt: now, synced: 0 }
    return Boolean(done)
  }

  /** Re-reads the row (after a sync brought the server's result). */
  async function refresh() {
    const row = check.value ? await getCheck(check.value.id) : undefined
    if (row) check.value = row
  }

  return { check, version, events, learnerName, status, index, elements, state, current, currentMark, finished, unmarked, result, saving, lastSaved, saveError, load, goTo, mark, undo, saveNote, finish, refresh }
}
