// The job form's schemas: a change names only the fields it changes.
import { describe, expect, it } from 'vitest'
import { createJobSchema, updateJobSchema } from '../../shared/schemas/jobs'

describe('job schemas', () => {
  it('fills the defaults of a new job', () => {
    expect(createJobSchema.parse({ title: 'Proof rolls' })).toEqual({ title: 'Proof rolls', workAreaId: null, purpose: '', hazards: [], ppe: [], toolsAndMaterials: [], workplaceArrangement: '', coverageTarget: 2 })
  })

  it('leaves out of a change every field it does not name, so nothing else is reset', () => {
    expect(updateJobSchema.parse({ title: 'Proof rolls' })).toEqual({ title: 'Proof rolls' })
    expect(updateJobSchema.parse({ workAreaId: null, coverageTarget: 0 })).toEqual({ workAreaId: null, coverageTarget: 0 })
  })

  it('refuses an empty change and checks the fields it names', () => {
    expect(updateJobSchema.safeParse({}).error?.issues[0]?.message).toBe('Nothing to change.')
    expect(updateJobSchema.safeParse({ coverageTarget: 1.5 }).error?.issues.map(i => [i.path.join('.'), i.message])).toEqual([['coverageTarget', 'Use a whole number.']])
    expect(updateJobSchema.safeParse({ title: 'x' }).error?.issues.map(i => i.path.join('.'))).toEqual(['title'])
  })
})
