// Refreshers on the tablet, offline too: the organisation's "trained on an older version" list
// (GET /api/retraining) kept in Dexie meta, so /lessons/new can start a refresher with no network.
// Where the changed ids come from offline: this copy, taken with the tablet's data (useOfflineData),
// and renewed whenever a job page or the start screen reads the list online. Only published
// versions stay on the tablet, so the ids are never worked out here from two versions.
import type { RetrainingEntry } from '#shared/types/retraining'
import { localDb } from './localdb'

interface StoredRefreshers { organisationId: string, at: number, entries: RetrainingEntry[] }

const keyOf = (organisationId: string) => `refreshers:${organisationId}`

async function stored(organisationId: string): Promise<StoredRefreshers | undefined> {
  return (await localDb().meta.get(keyOf(organisationId)))?.value as StoredRefreshers | undefined
}

/**
 * Keeps the server's list: all of it, or (with `jobId`) only that job's part, the rest left as it was.
 * A plain copy: IndexedDB cannot store Vue proxies.
 */
export async function storeRefreshers(organisationId: string, entries: readonly RetrainingEntry[], jobId?: string, now = Date.now()): Promise<void> {
  const store = localDb()
  await store.transaction('rw', store.meta, async () => {
    const kept = jobId ? ((await stored(organisationId))?.entries ?? []).filter(e => e.jobId !== jobId) : []
    const copy = JSON.parse(JSON.stringify([...kept, ...entries])) as RetrainingEntry[]
    await store.meta.put({ key: keyOf(organisationId), value: { organisationId, at: now, entries: copy } satisfies StoredRefreshers })
  })
}

/** The kept refresher of one learner on one job, or null. */
export async function refresherFor(organisationId: string, learnerId: string, jobId: string): Promise<RetrainingEntry | null> {
  return (await stored(organisationId))?.entries.find(e => e.learnerId === learnerId && e.jobId === jobId) ?? null
}

/** Downloads the whole organisation's list and keeps it (coaches and admins, while online). */
export async function downloadRefreshers(organisationId: string): Promise<void> {
  const answer = await $fetch<{ people: RetrainingEntry[] }>('/api/retraining')
  await storeRefreshers(organisationId, answer.people)
}
