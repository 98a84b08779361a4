// What the tablet remembers for working offline, beside the lesson data in localdb.ts: the
// last GET /api/me answer (so a signed-in coach can open the offline screens with no server)
// and a summary of the last reference-data download. Browser only, like localdb.ts.
import type { Role } from '#shared/types/roles'
import { localDb } from './localdb'
import { rememberedStillValid, type TabletDataSummary } from './offline'

export interface RememberedMember {
  user: { id: string, name: string, email: string }
  organisation: { id: string, name: string, coachesMayPublish: boolean }
  role: Role
}

const MEMBER_KEY = 'member'
const summaryKey = (organisationId: string) => `tablet-data:${organisationId}`

interface StoredMember extends RememberedMember {
  /** When the server first confirmed this member on this tablet (kept while it keeps confirming). */
  since: number
}

/** Keeps the server's last answer to GET /api/me (a plain copy: IndexedDB cannot store Vue proxies). */
export async function rememberMember(me: RememberedMember, now = Date.now()): Promise<void> {
  const store = localDb()
  await store.transaction('rw', store.meta, async () => {
    const before = (await store.meta.get(MEMBER_KEY))?.value as StoredMember | undefined
    const since = before?.user?.id === me.user.id && before.organisation?.id === me.organisation.id && typeof before.since === 'number' ? before.since : now
    const copy = JSON.parse(JSON.stringify(me)) as RememberedMember
    await store.meta.put({ key: MEMBER_KEY, value: { ...copy, since } satisfies StoredMember })
  })
}

/** The remembered member, while the session they had could still be running (REMEMBER_FOR_MS). */
export async function rememberedMember(now = Date.now()): Promise<RememberedMember | null> {
  const value = (await localDb().meta.get(MEMBER_KEY))?.value as StoredMember | undefined
  if (!value?.user?.id || !value.organisation?.id || !value.role || !rememberedStillValid(value.since, now)) return null
  return { user: value.user, organisation: value.organisation, role: value.role }
}

/** Signing out (or the server saying the session has ended) forgets who was signed in here. */
export async function forgetMember(): Promise<void> {
  await localDb().meta.delete(MEMBER_KEY)
}

export async function tabletDataSummary(organisationId: string): Promise<TabletDataSummary | null> {
  return ((await localDb().meta.get(summaryKey(organisationId)))?.value as TabletDataSummary | undefined) ?? null
}

export async function saveTabletDataSummary(summary: TabletDataSummary): Promise<void> {
  await localDb().meta.put({ key: summaryKey(summary.organisationId), value: { ...summary } })
}

/** Keys ("<id>:full", "<id>:thumb") of every photo on the tablet: an upload never changes, so these need no new download. */
export async function storedPhotoKeys(): Promise<Set<string>> {
  return new Set((await localDb().photos.toCollection().primaryKeys()) as string[])
}

/** Removes photos no stored breakdown shows any more; returns how many rows went. */
export async function prunePhotos(keep: ReadonlySet<string>): Promise<number> {
  const store = localDb()
  return store.photos.filter(p => !keep.has(p.id)).delete()
}
