// Sends what the tablet recorded and brings back what changed on the server. Runs when the
// connection returns (plugins/sync.client.ts) and on demand; one run at a time, state shared.
import Dexie, { type ObservabilitySet } from 'dexie'
import type { PullAnswer } from '~/utils/sync-pull-types'
import { localDb } from '~/utils/localdb'
import { storePulledChecks, type SyncedCheck, type SyncedCheckEvent } from '~/utils/local-checks'
import { applyPushAnswer, EVENTS_PER_PUSH, outbox, planPushes, storePulledScores, type PushAnswer, type SyncedEvent, type SyncedLesson } from '~/utils/sync-client'
import { retryWords, syncRetryDelay } from '~/utils/sync-retry'
import { isStorageFull } from '~/utils/storage-full'
import { pullNeedsDownload } from '~/utils/offline'

export interface SyncState {
  running: boolean
  /** Pushes sent of pushes planned, for the progress bar. */
  sent: number
  planned: number
  progress: string
  problem: string | null
  /** events: lesson marks and spot check marks together. */
  waiting: { lessons: number, events: number, checks: number }
  rejectedLessons: SyncedLesson[]
  rejectedEvents: SyncedEvent[]
  rejectedChecks: SyncedCheck[]
  rejectedCheckEvents: SyncedCheckEvent[]
  lastSyncedAt: number | null
  /** When the next automatic try is due after a push that did not get through (utils/sync-retry.ts), or null. */
  retryAt: number | null
}

let inFlight: Promise<void> | null = null
/** The automatic try after a failed run, and how many runs in a row have failed. */
let retryTimer: ReturnType<typeof setTimeout> | undefined
let failuresInRow = 0
/** How long after a change to the outbox the waiting counts are read again. */
const OUTBOX_RECOUNT_MS = 300
let watching: { organisationId: string, subscription: { unsubscribe: () => void } } | null = null

export function useSync() {
  const state = useState<SyncState>('sync', () => ({ running: false, sent: 0, planned: 0, progress: '', problem: null, waiting: { lessons: 0, events: 0, checks: 0 }, rejectedLessons: [], rejectedEvents: [], rejectedChecks: [], rejectedCheckEvents: [], lastSyncedAt: null, retryAt: null }))
  const member = useMemberStore()

  /** The full outbox: what is waiting and what was refused (read after each run, not on every tap). */
  async function readOutbox(organisationId: string) {
    const box = await outbox(organisationId)
    state.value.waiting = { lessons: box.lessons.length, events: box.events.length + box.checkEvents.length, checks: box.checks.length }
    state.value.rejectedLessons = box.rejectedLessons
    state.value.rejectedEvents = box.rejectedEvents
    state.value.rejectedChecks = box.rejectedChecks
    state.value.rejectedCheckEvents = box.rejectedCheckEvents
  }

  /**
   * Keeps the waiting counts live as marks are recorded, counted through the `synced` indexes: at
   * most once every OUTBOX_RECOUNT_MS after the outbox tables change (in this tab or another), not
   * by a liveQuery that re-counts after every single write — so a tap in the runner does not queue
   * four count queries behind its own commit on the stores the next tap writes.
   */
  function watchOutbox() {
    if (import.meta.server || !member.me) return
    const organisationId = member.me.organisation.id
    if (watching?.organisationId === organisationId) return
    watching?.subscription.unsubscribe()
    const db = localDb()
    const outboxParts = ['events', 'checkEvents', 'lessons', 'checks'].map(table => `idb://${db.name}/${table}/`)
    let timer: ReturnType<typeof setTimeout> | undefined
    let stopped = false
    const recount = async () => {
      timer = undefined
      const [events, checkEvents, lessons, checks] = await Promise.all([
        db.events.where('synced').equals(0).count(),
        db.checkEvents.where('synced').equals(0).count(),
        db.lessons.where('synced').equals(0).count(),
        db.checks.where('synced').equals(0).count(),
      ])
      if (stopped) return
      state.value.waiting = {
        events: Math.max(0, events + checkEvents - state.value.rejectedEvents.length - state.value.rejectedCheckEvents.length),
        lessons: Math.max(0, lessons - state.value.rejectedLessons.length),
        checks: Math.max(0, checks - state.value.rejectedChecks.length),
      }
    }
    const onMutated = (parts: ObservabilitySet) => {
      if (stopped || timer !== undefined || !Object.keys(parts).some(part => outboxParts.some(prefix => part.startsWith(prefix)))) return
      timer = setTimeout(() => void recount().catch(() => undefined), OUTBOX_RECOUNT_MS)
    }
    Dexie.on.storagemutated.subscribe(onMutated)
    const subscription = {
      unsubscribe: () => {
        stopped = true
        clearTimeout(timer)
        Dexie.on.storagemutated.unsubscribe(onMutated)
      },
    }
    void recount().catch(() => undefined)
    watching = { organisationId, subscription }
    readOutbox(organisationId)
    db.meta.get(`lastSyncedAt:${organisationId}`).then((row) => {
      state.value.lastSyncedAt = (row?.value as number | undefined) ?? null
    })
  }

  async function run() {
    const me = member.me
    if (!me || !runsLessons(me.role)) return
    if (!navigator.onLine) {
      state.value.problem = 'No connection: everything stays on this tablet and is sent when the connection returns.'
      return
    }
    const organisationId = me.organisation.id
    const db = localDb()
    state.value.running = true
    state.value.problem = null
    try {
      const device = await deviceId()
      const box = await outbox(organisationId)
      const pushes = planPushes(device, box.lessons, box.events, EVENTS_PER_PUSH, box.checks, box.checkEvents)
      state.value.planned = pushes.length
      state.value.sent = 0
      for (const [i, push] of pushes.entries()) {
        state.value.progress = `Sending ${i + 1} of ${pushes.length}: ${push.events.length} marks, ${push.lessons.length} lessons${push.checks.length ? `, ${push.checks.length} spot checks` : ''}`
        const answer = await $fetch<PushAnswer>('/api/sync', { method: 'POST', body: push })
        await applyPushAnswer(push, answer)
        state.value.sent = i + 1
      }
      state.value.progress = 'Checking the server for changes…'
      const cursorKey = `syncCursor:${organisationId}`
      let since = ((await db.meta.get(cursorKey))?.value as number | undefined) ?? 0
      const firstPull = since === 0
      let referenceChanged = false
      for (let page = 0; page < 50; page++) {
        const pulled = await $fetch<PullAnswer>('/api/sync', { query: { since } })
        referenceChanged ||= pulled.versions.length + pulled.removedVersions.length + pulled.learners.length + pulled.removedLearners.length > 0
        await storePulledScores(pulled.lessons)
        await storePulledChecks(organisationId, { full: since === 0, checks: pulled.checks ?? [], planItems: pulled.planItems ?? [], removedPlanItems: pulled.removedPlanItems ?? [], dueChecks: pulled.dueChecks })
        since = pulled.cursor
        if (!pulled.more) break
      }
      await db.meta.put({ key: cursorKey, value: since })
      const tabletData = useOfflineData()
      if (pullNeedsDownload({ first: firstPull, changed: referenceChanged }, { downloading: tabletData.state.value.running, summary: tabletData.state.value.summary }, Date.now())) await tabletData.refresh()
      const now = Date.now()
      await db.meta.put({ key: `lastSyncedAt:${organisationId}`, value: now })
      state.value.lastSyncedAt = now
      state.value.progress = ''
      failuresInRow = 0
    }
    catch (error) {
      const status = (error as { statusCode?: number })?.statusCode
      const retryAfter = (error as { response?: { headers?: Headers } })?.response?.headers?.get('retry-after') ?? null
      failuresInRow += 1
      // The tablet could not note the answer (its storage is full): sending again would not help.
      const full = isStorageFull(error)
      // What did not get an answer is still in the outbox; sending it again is safe (same ids).
      const delay = navigator.onLine && !full ? syncRetryDelay({ status, retryAfter }, failuresInRow) : null
      const again = delay === null ? '' : ` It is sent again by itself ${retryWords(delay)}.`
      state.value.problem = full
        ? 'This tablet\'s storage is full, so it could not note what the server took. Nothing is lost: free space on the tablet (remove photos, videos or apps it does not need), then send again.'
        : status === 401
          ? 'Sign in again to send what is waiting; it stays on this tablet meanwhile.'
          : status && delay !== null
            ? `The server is busy just now. Everything stays on this tablet.${again}`
            : status
              ? `The server refused the push (${status}). Everything stays on this tablet; try again.`
              : `The connection dropped. Everything stays on this tablet; it is sent when the connection returns.${again}`
      if (delay !== null) {
        state.value.retryAt = Date.now() + delay
        retryTimer = setTimeout(() => void syncNow(), delay)
      }
    }
    finally {
      state.value.running = false
      await readOutbox(organisationId).catch(() => undefined)
    }
  }

  function syncNow(): Promise<void> {
    if (import.meta.server) return Promise.resolve()
    // A run now replaces the automatic try that was waiting.
    clearTimeout(retryTimer)
    retryTimer = undefined
    state.value.retryAt = null
    inFlight ??= run().finally(() => {
      inFlight = null
    })
    return inFlight
  }

  return { state, syncNow, watchOutbox, readOutbox }
}
