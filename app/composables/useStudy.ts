// A learner's own training for /study and its study cards: from the server when it answers (and
// then kept on this device, photos too), from the device when it does not. One load per visit,
// shared by the overview and the card screens.
import type { MyTraining, StudyCard } from '#shared/types/people'
import { serverUnreachable, statusOf } from '~/utils/offline'
import { forgetStudy, keepStudy, keepStudyPhotos, keptStudy, studyPhotoIds, type StudyRecords } from '~/utils/study-cards'

export interface StudyState {
  /** Whose training this is: another member signing in on the same tab must not see it. */
  userId: string | null
  loading: boolean
  loaded: boolean
  cards: StudyCard[]
  records: Omit<StudyRecords, 'organisationId'> | null
  /** Where what is shown came from. */
  source: 'server' | 'device' | null
  /** The server says this account has no roster entry. */
  notOnRoster: boolean
  problem: string | null
  /** Photos being kept on the device, in words. */
  photos: string
}

export function useStudy() {
  const state = useState<StudyState>('study', () => ({ userId: null, loading: false, loaded: false, cards: [], records: null, source: null, notOnRoster: false, problem: null, photos: '' }))
  const member = useMemberStore()

  async function fromDevice(userId: string) {
    const kept = await keptStudy(userId).catch(() => ({ cards: [], records: null }))
    state.value.cards = kept.cards
    state.value.records = kept.records
    state.value.source = 'device'
    if (!kept.records) state.value.problem = 'No connection, and nothing is kept on this device yet. Open My training once while online.'
  }

  async function keepPhotos(cards: StudyCard[]) {
    const ids = studyPhotoIds(cards)
    if (!ids.length) return
    state.value.photos = 'Keeping the photos on this device…'
    const result = await keepStudyPhotos(ids, id => $fetch<Blob>(`/api/uploads/${id}`, { responseType: 'blob' }), (done, total) => {
      state.value.photos = `Keeping the photos on this device: ${done} of ${total}`
    }).catch(() => ({ kept: 0, missing: ids.length }))
    state.value.photos = result.missing
      ? `${result.missing} of ${ids.length} photos could not be kept on this device; the next visit online tries again.`
      : `All ${ids.length} photos are kept on this device.`
  }

  async function load() {
    if (import.meta.server) return
    const me = member.me
    if (!me || me.role !== 'learner' || state.value.loading) return
    if (state.value.userId !== me.user.id) Object.assign(state.value, { userId: me.user.id, loaded: false, cards: [], records: null, source: null, photos: '' })
    state.value.loading = true
    state.value.problem = null
    state.value.notOnRoster = false
    try {
      if (!member.fromDevice && navigator.onLine) {
        try {
          const answer = await $fetch<MyTraining>('/api/me/training')
          const { cards, ...records } = answer
          state.value.cards = cards
          state.value.records = { ...records, savedAt: Date.now() }
          state.value.source = 'server'
          // Keeping a copy may fail (storage full, private window); what the server sent is still shown.
          await keepStudy(me.user.id, me.organisation.id, answer).catch(() => undefined)
          void keepPhotos(cards)
          return
        }
        catch (error) {
          const status = statusOf(error)
          if (status === 404) {
            state.value.notOnRoster = true
            state.value.cards = []
            state.value.records = null
            await forgetStudy(me.user.id).catch(() => undefined)
            return
          }
          if (!serverUnreachable(status)) {
            state.value.problem = 'The server refused to show your training. Sign in again, or ask your coach.'
            return
          }
        }
      }
      await fromDevice(me.user.id)
    }
    finally {
      state.value.loading = false
      state.value.loaded = true
    }
  }

  /** Whether what the state holds is the signed-in member's own (loaded for them in this visit). */
  const ready = computed(() => state.value.loaded && state.value.userId === member.me?.user.id)

  return { state, ready, load }
}
