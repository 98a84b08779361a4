import { z } from 'zod'
import { ROLES } from '../types/roles'
import { emailSchema, passwordSchema, personNameSchema } from './auth'

export const roleSchema = z.enum(ROLES, { error: 'Choose a role: admin, coach, learner or auditor.' })

export const createInviteSchema = z.object({
  email: emailSchema,
  role: roleSchema,
  // Optional: the roster entry this person is (role learner only).
  learnerId: z.uuid('Choose a learner from the roster.').nullable().optional(),
})

export const acceptInviteSchema = z.object({
  token: z.string({ error: 'The invitation link is incomplete.' }).min(20, 'The invitation link is incomplete.').max(200, 'The invitation link is not valid.'),
  name: personNameSchema,
  password: passwordSchema,
})
