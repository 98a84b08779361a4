// The tablet's copy of who needs a refresher (app/utils/refresher-store.ts), on fake IndexedDB.
import 'fake-indexeddb/auto'
import { afterEach, beforeEach, describe, expect, it } from 'vitest'
import { closeLocalDb } from '../../app/utils/localdb'
import { refresherFor, storeRefreshers } from '../../app/utils/refresher-store'
import type { RetrainingEntry } from '../../shared/types/retraining'

const entry = (learnerId: string, jobId: string, trained = 1): RetrainingEntry => ({
  learnerId, learnerName: `Learner ${learnerId}`, jobId, jobTitle: `Job ${jobId}`,
  trainedVersion: { id: `${jobId}-v${trained}`, number: trained }, currentVersion: { id: `${jobId}-v9`, number: 9 },
  readySince: 1, changes: [{ id: 's1', level: 'step', status: 'changed', words: 'Step 1 reworded: “Stop”', taught: true }], focus: ['s1'],
})

beforeEach(async () => {
  await closeLocalDb()
  indexedDB.deleteDatabase('fourfold')
})
afterEach(() => closeLocalDb())

describe('refresher store', () => {
  it('keeps the whole list, then replaces one job\'s part and leaves the others', async () => {
    await storeRefreshers('org', [entry('a', 'J1'), entry('b', 'J1'), entry('a', 'J2')])
    expect(await refresherFor('org', 'b', 'J1')).toMatchObject({ learnerId: 'b', jobId: 'J1', focus: ['s1'] })
    // The job page read J1 again: b was refreshed meanwhile, a now trained on v2.
    await storeRefreshers('org', [entry('a', 'J1', 2)], 'J1')
    expect(await refresherFor('org', 'b', 'J1')).toBeNull()
    expect((await refresherFor('org', 'a', 'J1'))?.trainedVersion.number).toBe(2)
    expect(await refresherFor('org', 'a', 'J2')).not.toBeNull()
  })

  it('keeps organisations apart and answers null for what it never had', async () => {
    await storeRefreshers('org', [entry('a', 'J1')])
    expect(await refresherFor('other', 'a', 'J1')).toBeNull()
    expect(await refresherFor('org', 'zz', 'J1')).toBeNull()
    // A whole-list store replaces everything of that organisation.
    await storeRefreshers('org', [])
    expect(await refresherFor('org', 'a', 'J1')).toBeNull()
  })
})
