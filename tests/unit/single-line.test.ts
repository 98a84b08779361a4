// One-line names and titles (shared/schemas/common.ts isSingleLine): person names, organisation
// names, work areas and job titles refuse line breaks, tabs and other control characters, which
// could otherwise forge lines of a mail's text (the digest lists learner names and job titles; the
// organisation's name is in mail subjects). Names in any script still pass.
import { describe, expect, it } from 'vitest'
import { organisationNameSchema, personNameSchema, signupSchema } from '../../shared/schemas/auth'
import { workAreaSchema } from '../../shared/schemas/work-areas'
import { createJobSchema } from '../../shared/schemas/jobs'
import { updateOrganisationSchema } from '../../shared/schemas/organisation'
import { createLearnerSchema } from '../../shared/schemas/learners'

const HOSTILE = ['Ann\r\nBcc: intruder@elsewhere.example', 'Ann\nSubject: forged', 'Ann\rX', 'Ann\tLee', 'Ann\u0000', 'Ann\u0085Lee', 'Ann\u2028Lee', 'Ann\u001b[31m']
const FINE = ['Zoë Ó Briain-Nakamura', 'Þórunn', 'Мира', '李小龍', 'Nguyễn Thị', 'O\'Neill & Sons Bakery', 'Ann\u200dLee']

describe('one-line names and titles', () => {
  it.each(HOSTILE)('refuses %j with a message saying why', (value) => {
    for (const [schema, message] of [[personNameSchema, /name on one line/], [organisationNameSchema, /organisation's name on one line/]] as const) {
      const result = schema.safeParse(value)
      expect(result.success).toBe(false)
      expect(result.error?.issues[0]?.message).toMatch(message)
    }
    expect(workAreaSchema.safeParse({ name: value }).success).toBe(false)
    expect(createJobSchema.safeParse({ title: value }).error?.issues[0]?.message).toMatch(/title on one line/)
    expect(createLearnerSchema.safeParse({ name: value }).success).toBe(false)
    expect(updateOrganisationSchema.safeParse({ name: value }).success).toBe(false)
  })

  it.each(FINE)('takes %j', (value) => {
    expect(personNameSchema.safeParse(value).success).toBe(true)
    expect(organisationNameSchema.safeParse(value).success).toBe(true)
    expect(createJobSchema.safeParse({ title: value }).success).toBe(true)
  })

  it('still trims line breaks at the ends, which cannot start a line of their own', () => {
    expect(signupSchema.parse({ organisation: ' Bakehouse\r\n', name: '\tAnn Lee\n', email: ' ann@test.example\r\n', password: 'correct horse battery' }))
      .toMatchObject({ organisation: 'Bakehouse', name: 'Ann Lee', email: 'ann@test.example' })
  })
})
