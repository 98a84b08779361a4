// A learner's study cards on this device (Dexie): the breakdowns they were taught, their photos
// and their own records, kept after one online visit so /study opens with the network off.
// Rows are kept per signed-in user, so two learners sharing a tablet never see each other's.
// The studyCards table's primary key is named versionId; a row's key is "<versionId>:<userId>"
// (the same version may be on the tablet for two learners), and the card itself is in `data`.
import type { MyTraining, StudyCard } from '#shared/types/people'
import type { BreakdownContent } from '#shared/schemas/breakdown'
import { localDb, offlinePhoto, storePhoto } from './localdb'
import { photoIdsOf } from './offline'

/** What /study shows besides the cards, kept in the meta table. */
export interface StudyRecords extends Omit<MyTraining, 'cards'> {
  organisationId: string
  /** When the server last sent it. */
  savedAt: number
}

export interface KeptStudy { cards: StudyCard[], records: StudyRecords | null }

const recordsKey = (userId: string) => `study:${userId}`
const cardKey = (versionId: string, userId: string) => `${versionId}:${userId}`

/** Replaces what this device keeps for the user with the server's answer, in one transaction. */
export async function keepStudy(userId: string, organisationId: string, answer: MyTraining, now = Date.now()): Promise<void> {
  const store = localDb()
  // A plain copy: IndexedDB cannot store Vue's reactive proxies.
  const plain = JSON.parse(JSON.stringify(answer)) as MyTraining
  const { cards, ...rest } = plain
  await store.transaction('rw', [store.studyCards, store.meta], async () => {
    await store.studyCards.where('userId').equals(userId).delete()
    await store.studyCards.bulkPut(cards.map(card => ({ versionId: cardKey(card.versionId, userId), userId, data: card })))
    await store.meta.put({ key: recordsKey(userId), value: { ...rest, organisationId, savedAt: now } satisfies StudyRecords })
  })
}

/** What this device keeps for the user (nothing when they never opened /study online here). */
export async function keptStudy(userId: string): Promise<KeptStudy> {
  const store = localDb()
  const [rows, meta] = await Promise.all([store.studyCards.where('userId').equals(userId).toArray(), store.meta.get(recordsKey(userId))])
  const cards = rows.map(r => r.data as StudyCard).sort((a, b) => a.jobTitle.localeCompare(b.jobTitle))
  return { cards, records: (meta?.value as StudyRecords | undefined) ?? null }
}

/** Forgets the user's study cards and records on this device (they are not on the roster any more). */
export async function forgetStudy(userId: string): Promise<void> {
  const store = localDb()
  await store.transaction('rw', [store.studyCards, store.meta], async () => {
    await store.studyCards.where('userId').equals(userId).delete()
    await store.meta.delete(recordsKey(userId))
  })
}

/** Every photo the cards show, each once. */
export function studyPhotoIds(cards: ReadonlyArray<{ content: BreakdownContent }>): string[] {
  return [...new Set(cards.flatMap(c => photoIdsOf(c.content)))]
}

/**
 * Downloads the photos (full size) this device does not hold yet into the shared photos table.
 * An upload never changes, so a photo once kept is never fetched again. Returns how many are
 * on the device afterwards and how many could not be fetched.
 */
export async function keepStudyPhotos(ids: readonly string[], fetchPhoto: (id: string) => Promise<Blob>, onProgress?: (done: number, total: number) => void): Promise<{ kept: number, missing: number }> {
  const missingIds: string[] = []
  for (const id of ids) if (!(await offlinePhoto(id, 'full'))) missingIds.push(id)
  let done = 0
  let failed = 0
  for (const id of missingIds) {
    try {
      await storePhoto(id, 'full', await fetchPhoto(id))
    }
    catch {
      failed += 1
    }
    done += 1
    onProgress?.(done, missingIds.length)
  }
  return { kept: ids.length - failed, missing: failed }
}

/** The important steps of a breakdown in reading order, each with its unit (for "Step 2 of 7"). */
export function studySteps(content: BreakdownContent) {
  const withUnits = content.units.length > 1 || Boolean(content.units[0]?.title)
  return content.units.flatMap((unit, u) => unit.steps.map((step, s) => ({
    step,
    unitLabel: withUnits ? `Unit ${u + 1}${unit.title ? `: ${unit.title}` : ''}` : '',
    numberInUnit: s + 1,
  })))
}
