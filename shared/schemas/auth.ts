import { z } from 'zod'
import { isSingleLine } from './common'

// OWASP ASVS 5.0 V6.2: at least 8 characters (we ask 10), long passphrases allowed, no composition rules.
export const passwordSchema = z.string({ error: 'Enter a password.' })
  .min(10, 'Use at least 10 characters.')
  .max(128, 'Use at most 128 characters.')

export const emailSchema = z.string({ error: 'Enter an e-mail address.' })
  .trim()
  .max(254, 'That address is too long.')
  .pipe(z.email('Enter an e-mail address such as name@example.com.'))
  .transform(value => value.toLowerCase())

export const personNameSchema = z.string({ error: 'Enter a name.' })
  .trim()
  .min(1, 'Enter a name.')
  .max(120, 'Keep the name under 120 characters.')
  .refine(isSingleLine, 'Write the name on one line, without line breaks, tabs or other control characters.')

/** An organisation's name: it stands in mail subjects (invitations, the digest), so one line only. */
export const organisationNameSchema = z.string({ error: 'Enter the organisation\'s name.' })
  .trim()
  .min(2, 'Enter the organisation\'s name.')
  .max(120, 'Keep the name under 120 characters.')
  .refine(isSingleLine, 'Write the organisation\'s name on one line, without line breaks, tabs or other control characters.')

export const signupSchema = z.object({
  organisation: organisationNameSchema,
  name: personNameSchema,
  email: emailSchema,
  password: passwordSchema,
})

export const loginSchema = z.object({
  email: emailSchema,
  password: z.string({ error: 'Enter your password.' }).min(1, 'Enter your password.').max(128, 'Use at most 128 characters.'),
})

export const forgotSchema = z.object({ email: emailSchema })

export const resetSchema = z.object({
  token: z.string({ error: 'The link is incomplete.' }).min(20, 'The link is incomplete.').max(200, 'The link is not valid.'),
  password: passwordSchema,
})

export const changePasswordSchema = z.object({
  currentPassword: z.string({ error: 'Enter your current password.' }).min(1, 'Enter your current password.').max(128),
  newPassword: passwordSchema,
})

export type SignupInput = z.infer<typeof signupSchema>
export type LoginInput = z.infer<typeof loginSchema>
