import { describe, expect, it } from 'vitest'
import { changePasswordSchema, loginSchema, passwordSchema, resetSchema, signupSchema } from '../../shared/schemas/auth'
import { acceptInviteSchema, createInviteSchema } from '../../shared/schemas/invites'
import { updateMemberSchema } from '../../shared/schemas/members'
import { workAreaSchema } from '../../shared/schemas/work-areas'
import { updateOrganisationSchema } from '../../shared/schemas/organisation'

const messages = (r: { success: boolean, error?: { issues: Array<{ path: PropertyKey[], message: string }> } }) =>
  Object.fromEntries((r.error?.issues ?? []).map(i => [i.path.join('.'), i.message]))

describe('account schemas', () => {
  it('accepts a valid sign-up and normalises the e-mail address', () => {
    const r = signupSchema.safeParse({ organisation: '  Hollowmere  ', name: 'Odile', email: '  Odile@Bakery.Example ', password: 'long enough pw' })
    expect(r.success).toBe(true)
    expect(r.data).toEqual({ organisation: 'Hollowmere', name: 'Odile', email: 'odile@bakery.example', password: 'long enough pw' })
  })

  it('names each wrong field with a message a person can act on', () => {
    const r = signupSchema.safeParse({ organisation: '', name: 42, email: 'not-an-address', password: 'short' })
    expect(r.success).toBe(false)
    expect(messages(r)).toEqual({
      organisation: 'Enter the organisation\'s name.',
      name: 'Enter a name.',
      email: 'Enter an e-mail address such as name@example.com.',
      password: 'Use at least 10 characters.',
    })
  })

  // OWASP ASVS 5.0 V6.2.1 (at least 8 characters) and V6.2.9 (at least 64 characters permitted).
  it('follows ASVS 5.0 on password length: no fewer than 8 required, 64 and more allowed, no composition rules', () => {
    expect(passwordSchema.safeParse('a'.repeat(7)).success).toBe(false)
    expect(passwordSchema.safeParse('a'.repeat(10)).success).toBe(true)
    expect(passwordSchema.safeParse('a'.repeat(64)).success).toBe(true)
    expect(passwordSchema.safeParse('x'.repeat(128)).success).toBe(true)
    expect(passwordSchema.safeParse('x'.repeat(129)).success).toBe(false)
    expect(passwordSchema.safeParse('only lowercase words').success).toBe(true)
  })

  it('requires a password at sign-in but does not apply the length rule to it', () => {
    expect(loginSchema.safeParse({ email: 'a@b.example', password: 'x' }).success).toBe(true)
    expect(messages(loginSchema.safeParse({ email: 'a@b.example', password: '' }))).toEqual({ password: 'Enter your password.' })
  })

  it('rejects reset and invite tokens that cannot be ours', () => {
    expect(resetSchema.safeParse({ token: 'short', password: 'long enough pw' }).success).toBe(false)
    expect(resetSchema.safeParse({ token: 'x'.repeat(43), password: 'long enough pw' }).success).toBe(true)
    expect(acceptInviteSchema.safeParse({ token: 'x'.repeat(43), name: ' ', password: 'long enough pw' }).success).toBe(false)
    expect(changePasswordSchema.safeParse({ currentPassword: 'old', newPassword: 'new but long' }).success).toBe(true)
  })

  it('knows the four roles and nothing else', () => {
    for (const role of ['admin', 'coach', 'learner', 'auditor']) expect(createInviteSchema.safeParse({ email: 'a@b.example', role }).success).toBe(true)
    expect(messages(updateMemberSchema.safeParse({ role: 'owner' }))).toEqual({ role: 'Choose a role: admin, coach, learner or auditor.' })
  })

  it('checks work areas and organisation settings', () => {
    expect(workAreaSchema.safeParse({ name: '  Bake line ' }).data).toEqual({ name: 'Bake line' })
    expect(workAreaSchema.safeParse({ name: 'x'.repeat(81) }).success).toBe(false)
    expect(updateOrganisationSchema.safeParse({}).success).toBe(false)
    expect(updateOrganisationSchema.safeParse({ coachesMayPublish: true }).success).toBe(true)
  })
})

describe('roster schema', async () => {
  const { updateLearnerSchema } = await import('../../shared/schemas/learners')
  it('changes only the fields a PATCH names', () => {
    expect(updateLearnerSchema.parse({ reference: 'HB-1' })).toEqual({ reference: 'HB-1' })
    expect(updateLearnerSchema.safeParse({}).success).toBe(false)
  })
})
