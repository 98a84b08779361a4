// The lesson the review shows, from the server (GET /api/lessons/[id]: the scores it computed at
// sync and a second observer's marks) or, when the server cannot be reached or does not have it
// yet, from this tablet (Dexie) for a lesson recorded here, scored with the same shared rules.
import type { BreakdownContent } from '#shared/schemas/breakdown'
import type { LessonEvent } from '#shared/utils/lesson-events'
import { replayLesson } from '#shared/utils/lesson-state'
import { focusContent } from '#shared/utils/refresher'
import { getLesson, lessonEvents, localDb, type LessonStage } from './localdb'
import { serverUnreachable, statusOf } from './offline'

export interface ReviewScore {
  t1: number | null
  t2: number | null
  t3: number | null
  t4: number | null
  order: number | null
  recall: number | null
  readiness: 'ready' | 'another-pass'
  represent: Array<{ text: string, why: string, safety: boolean, level?: string }>
}

export interface ReviewLesson {
  id: string
  /** Where this copy came from: the server's record, or this tablet's own copy. */
  source: 'server' | 'tablet'
  learnerName: string
  jobTitle: string
  job: { purpose: string, toolsAndMaterials: string[], workplaceArrangement: string }
  versionNumber: number
  coachUserId: string | null
  coachName: string | null
  place: string
  startedAt: number
  signedOffAt: number | null
  decision: 'ready' | 'another-pass' | null
  prepare: Record<string, { done: boolean, note: string }>
  helper: string
  acknowledgement: { name: string, signature: string | null, at: number } | null
  stageSeconds: Partial<Record<LessonStage, number>>
  focus: string[] | null
  /** The pinned content, narrowed to the focus for a refresher (what was taught and scored). */
  content: BreakdownContent
  events: LessonEvent[]
  score: ReviewScore | null
}

type ApiDate = string | number
interface ServerAnswer extends Omit<ReviewLesson, 'source' | 'startedAt' | 'signedOffAt' | 'events' | 'content' | 'job' | 'focus'> {
  startedAt: ApiDate
  signedOffAt: ApiDate | null
  focus?: string[] | null
  job?: ReviewLesson['job']
  content: BreakdownContent
  events: Array<Omit<LessonEvent, 'lessonId'>>
}

const toTime = (d: ApiDate) => (typeof d === 'number' ? d : Date.parse(d))

export function fromServer(answer: ServerAnswer): ReviewLesson {
  const focus = answer.focus ?? null
  return {
    ...answer,
    source: 'server',
    startedAt: toTime(answer.startedAt),
    signedOffAt: answer.signedOffAt === null ? null : toTime(answer.signedOffAt),
    job: answer.job ?? { purpose: '', toolsAndMaterials: [], workplaceArrangement: '' },
    focus,
    content: focusContent(answer.content, focus),
    events: answer.events.map(e => ({ ...e, lessonId: answer.id })),
  }
}

/** This tablet's copy of a lesson recorded here, or null when it is not on this tablet. */
export async function fromTablet(id: string, me: { user: { id: string, name: string } } | null): Promise<ReviewLesson | null> {
  const lesson = await getLesson(id)
  if (!lesson) return null
  const db = localDb()
  const [version, learner, events] = await Promise.all([db.versions.get(lesson.versionId), db.learners.get(lesson.learnerId), lessonEvents(id)])
  if (!version) return null
  const focus = lesson.focus ?? null
  const content = focusContent(version.content, focus)
  const plain: LessonEvent[] = events.map(({ synced: _synced, ...e }) => ({ id: e.id, lessonId: e.lessonId, pass: e.pass, elementId: e.elementId, kind: e.kind, value: e.value, clientTime: e.clientTime, deviceId: e.deviceId, seq: e.seq }))
  const state = replayLesson(plain, content)
  return {
    id,
    source: 'tablet',
    learnerName: learner?.name ?? 'A learner no longer on this tablet',
    jobTitle: version.job.title,
    job: { purpose: version.job.purpose, toolsAndMaterials: version.job.toolsAndMaterials, workplaceArrangement: version.job.workplaceArrangement },
    versionNumber: version.number,
    coachUserId: lesson.coachUserId,
    coachName: me && me.user.id === lesson.coachUserId ? me.user.name : null,
    place: lesson.place,
    startedAt: lesson.startedAt,
    signedOffAt: lesson.signedOffAt,
    decision: lesson.decision,
    prepare: lesson.prepare,
    helper: lesson.helper,
    acknowledgement: lesson.acknowledgement,
    stageSeconds: lesson.stageSeconds,
    focus,
    content,
    events: plain,
    score: plain.length
      ? { t1: state.scores.T1, t2: state.scores.T2, t3: state.scores.T3, t4: state.scores.T4, order: state.scores.order, recall: state.scores.recall, readiness: state.readiness.suggestion, represent: state.readiness.represent }
      : null,
  }
}

export type ReviewLoad = { lesson: ReviewLesson, problem: null } | { lesson: null, problem: 'not-found' | 'unreachable' | 'forbidden' | 'failed' }

/** The server's record first (it has both coaches' marks); this tablet's copy when the server has none or cannot be reached. */
export async function loadReviewLesson(id: string, me: { user: { id: string, name: string } } | null): Promise<ReviewLoad> {
  let problem: 'not-found' | 'unreachable' | 'forbidden' | 'failed' = 'failed'
  try {
    return { lesson: fromServer(await $fetch<ServerAnswer>(`/api/lessons/${encodeURIComponent(id)}`)), problem: null }
  }
  catch (error) {
    const status = statusOf(error)
    problem = serverUnreachable(status) ? 'unreachable' : status === 404 ? 'not-found' : status === 403 ? 'forbidden' : 'failed'
  }
  if (problem === 'unreachable' || problem === 'not-found') {
    const local = await fromTablet(id, me).catch(() => null)
    if (local) return { lesson: local, problem: null }
  }
  return { lesson: null, problem }
}
