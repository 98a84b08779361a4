// A learner's study cards on the device (app/utils/study-cards.ts, Dexie through fake-indexeddb):
// kept per user (two learners on one tablet never see each other's, even on the same version),
// replaced whole, forgotten; photos fetched once; steps in reading order.
import 'fake-indexeddb/auto'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { closeLocalDb, offlinePhoto, storePhoto } from '../../app/utils/localdb'
import { forgetStudy, keepStudy, keepStudyPhotos, keptStudy, studyPhotoIds, studySteps } from '../../app/utils/study-cards'
import type { MyTraining, StudyCard } from '../../shared/types/people'
import type { BreakdownContent } from '../../shared/schemas/breakdown'

const content = (photo: string | null): BreakdownContent => ({
  units: [{ id: 'u1', title: '', steps: [
    { id: 's1', text: 'Lock out', photoId: photo, keyPoints: [{ id: 'k1', kind: 'safety', text: 'Own padlock', reason: 'Nobody can start it', photoId: 'p-kp' }] },
    { id: 's2', text: 'Open the guard', photoId: photo, keyPoints: [] },
  ] }],
})

const card = (versionId: string, jobTitle: string, photo: string | null = null): StudyCard => ({
  versionId, versionNumber: 1, jobId: `job-${versionId}`, jobTitle, content: content(photo), taughtAt: 5, lessonId: `l-${versionId}`, newer: null,
  job: { purpose: '', hazards: [], ppe: [], toolsAndMaterials: [], workplaceArrangement: '', workAreaName: null },
})

const answer = (name: string, cards: StudyCard[]): MyTraining => ({ learner: { id: `learner-${name}`, name }, cards, lessons: [], checks: [], jobs: [] })

beforeEach(async () => {
  await closeLocalDb()
  indexedDB.deleteDatabase('fourfold')
})
afterEach(() => closeLocalDb())

describe('study cards on the device', () => {
  it('keeps each user\'s cards apart, even for the same version', async () => {
    await keepStudy('ilse', 'org', answer('Ilse', [card('v1', 'Slicer'), card('v2', 'Bag sealer')]), 100)
    await keepStudy('tomas', 'org', answer('Tomas', [card('v1', 'Slicer')]), 200)
    const ilse = await keptStudy('ilse')
    expect(ilse.cards.map(c => c.jobTitle)).toEqual(['Bag sealer', 'Slicer'])
    expect(ilse.records).toMatchObject({ learner: { name: 'Ilse' }, organisationId: 'org', savedAt: 100 })
    expect((await keptStudy('tomas')).cards.map(c => c.versionId)).toEqual(['v1'])
    expect(await keptStudy('nobody')).toEqual({ cards: [], records: null })
  })

  it('replaces the whole set on the next visit, and forgets it', async () => {
    await keepStudy('ilse', 'org', answer('Ilse', [card('v1', 'Slicer'), card('v2', 'Bag sealer')]))
    await keepStudy('ilse', 'org', answer('Ilse', [card('v3', 'Slicer')]))
    expect((await keptStudy('ilse')).cards.map(c => c.versionId)).toEqual(['v3'])
    await keepStudy('tomas', 'org', answer('Tomas', [card('v1', 'Slicer')]))
    await forgetStudy('ilse')
    expect(await keptStudy('ilse')).toEqual({ cards: [], records: null })
    expect((await keptStudy('tomas')).cards).toHaveLength(1)
  })

  it('fetches only the photos the device lacks, and counts the ones that failed', async () => {
    await storePhoto('p1', 'full', new Blob(['have']))
    const asked: string[] = []
    const ids = studyPhotoIds([card('v1', 'Slicer', 'p1'), card('v2', 'Sealer', 'p2'), card('v3', 'Weigher', 'p-gone')])
    expect(ids).toEqual(['p1', 'p-kp', 'p2', 'p-gone'])
    const result = await keepStudyPhotos(ids, async (id) => {
      asked.push(id)
      if (id === 'p-gone') throw new Error('404')
      return new Blob([id])
    })
    expect(asked).toEqual(['p-kp', 'p2', 'p-gone'])
    expect(result).toEqual({ kept: 3, missing: 1 })
    expect(await offlinePhoto('p2', 'full')).toBeDefined()
  })
})

describe('study steps', () => {
  it('flattens units in reading order and names them only when there are several or a title', () => {
    expect(studySteps(content(null)).map(s => [s.step.id, s.unitLabel, s.numberInUnit])).toEqual([['s1', '', 1], ['s2', '', 2]])
    const two: BreakdownContent = { units: [{ ...content(null).units[0]!, title: 'Guard' }, { id: 'u2', title: '', steps: [{ id: 's3', text: 'Fit', photoId: null, keyPoints: [] }] }] }
    expect(studySteps(two).map(s => [s.step.id, s.unitLabel])).toEqual([['s1', 'Unit 1: Guard'], ['s2', 'Unit 1: Guard'], ['s3', 'Unit 2']])
  })
})
