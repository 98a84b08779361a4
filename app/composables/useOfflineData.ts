// The tablet's copy of what a lesson needs with the network off: every published breakdown of
// the organisation with its photos (full and thumbnail), and the roster, stored in IndexedDB.
// Runs after sign-in, when the connection returns and on "Refresh tablet data"; only for
// coaches and admins, the roles that run lessons. One run at a time; the state is shared.
import { STAFF_ROLES, type Role } from '#shared/types/roles'
import { lessonsOf, localDb, offlineLearners, offlineVersions, storePhoto, storeReferenceData } from '~/utils/localdb'
import { keepForLessons, photoIdsOf, serverUnreachable, statusOf, toOfflineLearner, toOfflineVersion, type LearnerAnswer, type TabletDataSummary, type VersionAnswer } from '~/utils/offline'
import { prunePhotos, saveTabletDataSummary, storedPhotoKeys, tabletDataSummary } from '~/utils/offline-store'
import { downloadRefreshers } from '~/utils/refresher-store'
import { checksOf } from '~/utils/local-checks'

/** As much of a GET /api/jobs row as the tablet needs. */
interface JobRow { published: { id: string } | null }

export interface OfflineDataState {
  running: boolean
  /** What is happening now, in words ("Downloading photos: 3 of 12"). */
  progress: string
  /** Why the last refresh did not finish, in words; null when it did. */
  problem: string | null
  summary: TabletDataSummary | null
}

/** Parallel downloads at most: enough to fill the line, few enough not to crowd out a coach's own requests. */
const PARALLEL = 4

export function runsLessons(role: Role | null | undefined): boolean {
  return !!role && (STAFF_ROLES as readonly Role[]).includes(role)
}

// The refresh in progress, shared by every caller (browser only; refresh() returns at once on the server).
let inFlight: Promise<void> | null = null

async function eachLimited<T>(items: readonly T[], limit: number, work: (item: T, index: number) => Promise<void>) {
  let next = 0
  const lanes = Array.from({ length: Math.min(limit, items.length) }, async () => {
    while (next < items.length) {
      const index = next++
      await work(items[index]!, index)
    }
  })
  await Promise.all(lanes)
}

export function useOfflineData() {
  const state = useState<OfflineDataState>('offline-data', () => ({ running: false, progress: '', problem: null, summary: null }))
  const member = useMemberStore()

  /** Reads what the tablet holds for the signed-in organisation (no network). */
  async function load() {
    if (import.meta.server || !member.me) return
    state.value.summary = await tabletDataSummary(member.me.organisation.id).catch(() => null)
  }

  async function download(organisationId: string) {
    state.value.progress = 'Downloading the list of jobs…'
    const jobs = await $fetch<JobRow[]>('/api/jobs')
    const published = jobs.flatMap(j => j.published ? [j.published.id] : [])
    const versions: ReturnType<typeof toOfflineVersion>[] = []
    let done = 0
    await eachLimited(published, PARALLEL, async (id, index) => {
      try {
        versions[index] = toOfflineVersion(await $fetch<VersionAnswer>(`/api/versions/${id}`), organisationId)
      }
      catch (error) {
        // Retired or archived between the list and this request: it is simply not there any more.
        if (statusOf(error) !== 404) throw error
      }
      done += 1
      state.value.progress = `Downloading breakdowns: ${done} of ${published.length}`
    })
    state.value.progress = 'Downloading the roster…'
    const roster = (await $fetch<LearnerAnswer[]>('/api/learners')).map(l => toOfflineLearner(l, organisationId))

    // Keep what lessons and spot checks on this tablet still point to (a version retired since
    // they started), then replace the rest in one transaction.
    const [storedVersions, storedLearners, lessons, checks] = await Promise.all([offlineVersions(organisationId), offlineLearners(organisationId), lessonsOf(organisationId), checksOf(organisationId)])
    const fresh = versions.filter(Boolean)
    const merged = keepForLessons({ versions: fresh, learners: roster }, { versions: storedVersions, learners: storedLearners }, [...lessons, ...checks])
    await storeReferenceData(organisationId, merged)
    // Who was trained on an older version, so a refresher can start offline. A lost connection
    // stops the refresh; any other refusal keeps the previous copy.
    await downloadRefreshers(organisationId).catch((error) => {
      if (serverUnreachable(statusOf(error))) throw error
    })

    // Photos: an upload never changes (a new photo gets a new id), so only new ones are fetched.
    const have = await storedPhotoKeys()
    const photoIds = [...new Set(merged.versions.flatMap(v => photoIdsOf(v.content)))]
    const wanted = photoIds.flatMap(id => (['full', 'thumb'] as const).filter(size => !have.has(`${id}:${size}`)).map(size => ({ id, size })))
    let fetched = 0
    await eachLimited(wanted, PARALLEL, async ({ id, size }) => {
      try {
        const blob = await $fetch<Blob>(`/api/uploads/${id}`, { query: size === 'thumb' ? { size } : {}, responseType: 'blob' })
        await storePhoto(id, size, blob)
      }
      catch (error) {
        // A lost connection stops the refresh; a photo the server no longer has is counted below.
        if (serverUnreachable(statusOf(error))) throw error
      }
      fetched += 1
      state.value.progress = `Downloading photos: ${fetched} of ${wanted.length}`
    })
    // Photos that no breakdown on the tablet (of any organisation) shows any more.
    const allVersions = await localDb().versions.toArray()
    await prunePhotos(new Set(allVersions.flatMap(v => photoIdsOf(v.content))))

    const haveNow = await storedPhotoKeys()
    const complete = photoIds.filter(id => haveNow.has(`${id}:full`) && haveNow.has(`${id}:thumb`)).length
    const summary: TabletDataSummary = {
      organisationId,
      breakdowns: fresh.length,
      learners: roster.length,
      photos: complete,
      photosMissing: photoIds.length - complete,
      at: Date.now(),
    }
    await saveTabletDataSummary(summary)
    return summary
  }

  /** Downloads the organisation's reference data; resolves when done (or at once for roles that do not run lessons). */
  function refresh(): Promise<void> {
    if (import.meta.server) return Promise.resolve()
    const me = member.me
    if (!me || !runsLessons(me.role)) return Promise.resolve()
    if (inFlight) return inFlight
    state.value.running = true
    state.value.problem = null
    inFlight = (async () => {
      try {
        state.value.summary = await download(me.organisation.id)
      }
      catch (error) {
        state.value.problem = serverUnreachable(statusOf(error))
          ? 'Could not reach the server. The tablet keeps what it had; it tries again when the connection returns.'
          : 'The server refused the download. Sign in again, or ask an admin.'
        await load()
      }
      finally {
        state.value.running = false
        state.value.progress = ''
        inFlight = null
      }
    })()
    return inFlight
  }

  return { state, load, refresh }
}
