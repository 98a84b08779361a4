// Lessons a second coach marks on this tablet (issue 6, item 9). The lesson itself lives on
// another tablet and on the server; this tablet keeps only what the observer screen needs to work
// offline (a snapshot in Dexie meta, key "observed:<lessonId>") and the observer's own
// 'observer-mark' events, which sit in the ordinary event outbox and sync like any mark.
import type { BreakdownContent } from '#shared/schemas/breakdown'
import { localDb, type LocalEvent } from './localdb'

export interface ObservedLesson {
  lessonId: string
  organisationId: string
  learnerName: string
  jobTitle: string
  versionNumber: number
  coachName: string | null
  startedAt: number
  place: string
  /** The content the lesson is marked on (already narrowed for a refresher). */
  content: BreakdownContent
  /** Try-out pass keys the lesson's coach had opened when the snapshot was taken ("T3-2"). */
  lessonPasses: string[]
  savedAt: number
}

const PREFIX = 'observed:'

export async function rememberObservedLesson(lesson: ObservedLesson): Promise<void> {
  await localDb().meta.put({ key: `${PREFIX}${lesson.lessonId}`, value: lesson })
}

export async function observedLesson(lessonId: string): Promise<ObservedLesson | undefined> {
  return (await localDb().meta.get(`${PREFIX}${lessonId}`))?.value as ObservedLesson | undefined
}

/** Ids of the lessons observed on this tablet for an organisation: their events belong in the outbox. */
export async function observedLessonIds(organisationId: string): Promise<string[]> {
  const rows = await localDb().meta.where('key').startsWith(PREFIX).toArray()
  return rows.map(r => r.value as ObservedLesson).filter(o => o.organisationId === organisationId).map(o => o.lessonId)
}

/** This tablet's events of a lesson that are the observer's: their marks and the undos of them. */
export async function observerEventsOf(lessonId: string): Promise<LocalEvent[]> {
  const events = await localDb().events.where('lessonId').equals(lessonId).toArray()
  const mine = new Set(events.filter(e => e.kind === 'observer-mark').map(e => e.id))
  // An undo of an undo is the observer's too when its target is.
  let grew = true
  while (grew) {
    grew = false
    for (const e of events) {
      if (e.kind === 'undo' && e.value && mine.has(e.value) && !mine.has(e.id)) {
        mine.add(e.id)
        grew = true
      }
    }
  }
  return events.filter(e => mine.has(e.id))
}
