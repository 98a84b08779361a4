// Saves a draft about a second after the last edit, with the revision it was based on. The
// server refuses a save based on an older revision (409): then saving stops and the coach
// decides, so another coach's work is never overwritten. No connection: keep it, retry.
import type { Ref } from 'vue'
import type { BreakdownContent } from '#shared/schemas/breakdown'
import type { ApiDate, VersionDetail } from '~/types/jobs'

export type SaveState = 'unchanged' | 'pending' | 'saving' | 'saved' | 'offline' | 'conflict' | 'locked' | 'invalid' | 'error'

const RETRY_MS = 5000

export function useDraftAutosave(versionId: () => string, content: Ref<BreakdownContent>, start: { revision: number, updatedAt: ApiDate | null }) {
  const revision = ref(start.revision)
  const state = ref<SaveState>('unchanged')
  // Revision 0 is the draft as it was started: nothing of this coach's is saved in it yet.
  const savedAt = ref<Date | null>(start.revision > 0 && start.updatedAt != null ? new Date(start.updatedAt) : null)
  const problem = ref('')
  const conflict = ref<{ message: string, currentRevision: number } | null>(null)
  const online = useOnline()

  let lastSaved = JSON.stringify(content.value)
  let inFlight: Promise<void> | null = null
  let again = false
  let retry: ReturnType<typeof setTimeout> | undefined

  const dirty = () => JSON.stringify(content.value) !== lastSaved
  const stopped = () => state.value === 'conflict' || state.value === 'locked'

  function scheduleRetry() {
    clearTimeout(retry)
    retry = setTimeout(() => void save(), RETRY_MS)
  }

  async function attempt() {
    const snapshot = JSON.stringify(content.value)
    state.value = 'saving'
    try {
      const answer = await $fetch<{ revision: number, updatedAt: ApiDate }>(`/api/versions/${versionId()}`, {
        method: 'PATCH',
        body: { revision: revision.value, content: JSON.parse(snapshot) as BreakdownContent },
      })
      revision.value = answer.revision
      lastSaved = snapshot
      savedAt.value = new Date(answer.updatedAt)
      problem.value = ''
      // Edits made while this was on its way are saved by the next debounced call.
      state.value = dirty() ? 'pending' : 'saved'
    }
    catch (error) {
      const e = routeError(error)
      if (e.status === null) {
        state.value = 'offline'
        scheduleRetry()
      }
      else if (e.status === 409 && typeof e.data.currentRevision === 'number') {
        state.value = 'conflict'
        conflict.value = { message: e.message, currentRevision: e.data.currentRevision }
      }
      else if (e.status === 409) {
        state.value = 'locked'
        problem.value = e.message
      }
      else if (e.status === 422 || e.status === 400 || e.status === 413) {
        // The edit itself is refused (too long, a photo that is not ours); saving resumes with the next edit.
        state.value = 'invalid'
        const first = Object.entries(e.fieldErrors)[0]
        problem.value = first ? `${readablePath(first[0])}: ${first[1].join(' ')}` : e.message
      }
      else if (e.status === 401) {
        state.value = 'error'
        problem.value = 'you are signed out. Sign in again in another tab; your changes stay on this screen'
        scheduleRetry()
      }
      else {
        state.value = 'error'
        problem.value = e.message
        scheduleRetry()
      }
    }
  }

  async function save(): Promise<void> {
    if (stopped() || !import.meta.client) return
    if (inFlight) {
      again = true
      return inFlight
    }
    if (!dirty()) {
      if (state.value === 'pending' || state.value === 'offline' || state.value === 'error') state.value = savedAt.value ? 'saved' : 'unchanged'
      return
    }
    clearTimeout(retry)
    inFlight = attempt().finally(() => (inFlight = null))
    await inFlight
    if (again) {
      again = false
      await save()
    }
  }

  // Say at once that there is something unsaved; save after a second of quiet (at most every 8 s while typing).
  watch(content, () => {
    if (stopped() || !dirty()) return
    if (state.value !== 'offline' && state.value !== 'saving') state.value = 'pending'
  }, { deep: true })
  watchDebounced(content, () => void save(), { deep: true, debounce: 1000, maxWait: 8000 })
  watch(online, (isOnline) => {
    if (isOnline && (state.value === 'offline' || state.value === 'error')) void save()
  })
  onScopeDispose(() => clearTimeout(retry))

  /** Save now and wait, for publishing and leaving: true when everything is on the server. */
  async function flush(): Promise<boolean> {
    await save()
    while (inFlight) await inFlight
    return !dirty() && !stopped()
  }

  /** After a conflict: take the server's latest draft; the caller keeps the coach's text to copy. */
  async function reloadLatest(): Promise<VersionDetail> {
    const latest = await $fetch<VersionDetail>(`/api/versions/${versionId()}`)
    revision.value = latest.revision
    lastSaved = JSON.stringify(latest.content)
    savedAt.value = new Date(latest.updatedAt)
    conflict.value = null
    problem.value = ''
    state.value = latest.status === 'draft' ? 'saved' : 'locked'
    return latest
  }

  const words = computed(() => {
    switch (state.value) {
      case 'unchanged': return savedAt.value ? `Saved ${formatTime(savedAt.value)}` : 'No changes yet'
      case 'pending':
      case 'saving': return 'Saving…'
      case 'saved': return `Saved ${formatTime(savedAt.value)}`
      case 'offline': return 'Not saved: no connection — will retry'
      case 'conflict': return 'Someone else changed this draft'
      case 'locked': return 'Not saved: this version can no longer change'
      case 'invalid': return `Not saved: ${problem.value}`
      default: return `Not saved: ${problem.value} — will retry`
    }
  })

  return { state, words, revision, savedAt, problem, conflict, dirty, save, flush, reloadLatest }
}
