// Picking a learner and a job from what is on this tablet (works offline), with type to search:
// the same on the lesson start screen and the spot check start screen.
import type { OfflineLearner, OfflineVersion } from '~/utils/localdb'

/** Rows a pick list shows at most while the coach types. */
export const PICK_SHOWN = 40

function wordsOf(q: string) {
  return q.trim().toLowerCase().split(/\s+/).filter(Boolean)
}

function matches(words: string[], haystack: string) {
  const h = haystack.toLowerCase()
  return words.every(w => h.includes(w))
}

/** The newest published version of each job, by title. */
export function newestPerJob(versions: readonly OfflineVersion[]): OfflineVersion[] {
  const newest = new Map<string, OfflineVersion>()
  for (const v of versions) {
    const have = newest.get(v.jobId)
    if (!have || v.number > have.number) newest.set(v.jobId, v)
  }
  return [...newest.values()].sort((a, b) => a.job.title.localeCompare(b.job.title, 'en-GB'))
}

export function useTabletPick(initial: { learnerId?: string, jobId?: string } = {}) {
  const learners = shallowRef<OfflineLearner[]>([])
  const versions = shallowRef<OfflineVersion[]>([])
  const jobs = computed(() => newestPerJob(versions.value))

  const learnerQuery = ref('')
  const jobQuery = ref('')
  const learnerId = ref(initial.learnerId ?? '')
  const jobId = ref(initial.jobId ?? '')

  const learnerMatches = computed(() => {
    const words = wordsOf(learnerQuery.value)
    return learners.value.filter(l => matches(words, `${l.name} ${l.workAreaName ?? ''} ${l.reference}`))
  })
  const jobMatches = computed(() => {
    const words = wordsOf(jobQuery.value)
    return jobs.value.filter(v => matches(words, `${v.job.title} ${v.job.workAreaName ?? ''}`))
  })
  const chosenLearner = computed(() => learners.value.find(l => l.id === learnerId.value) ?? null)
  const chosenJob = computed(() => jobs.value.find(v => v.jobId === jobId.value) ?? null)
  // The chosen row stays in view while the coach types something else.
  const learnerRows = computed(() => {
    const rows = learnerMatches.value.slice(0, PICK_SHOWN)
    return chosenLearner.value && !rows.includes(chosenLearner.value) ? [chosenLearner.value, ...rows] : rows
  })
  const jobRows = computed(() => {
    const rows = jobMatches.value.slice(0, PICK_SHOWN)
    return chosenJob.value && !rows.includes(chosenJob.value) ? [chosenJob.value, ...rows] : rows
  })

  return { learners, versions, jobs, learnerQuery, jobQuery, learnerId, jobId, learnerMatches, jobMatches, chosenLearner, chosenJob, learnerRows, jobRows }
}
