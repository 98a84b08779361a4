import { z } from 'zod'
import { personNameSchema } from './auth'

export const learnerFieldsSchema = z.object({
  name: personNameSchema,
  workAreaId: z.uuid('Choose a work area from the list.').nullable().default(null),
  reference: z.string().trim().max(60, 'Keep the reference under 60 characters.').default(''),
})

export const createLearnerSchema = learnerFieldsSchema
// Not .partial(): zod 4 applies a field's default inside .optional(), so a PATCH naming one
// field would reset the others. The defaults are taken off first.
const f = learnerFieldsSchema.shape
export const updateLearnerSchema = z.object({
  name: f.name.optional(),
  workAreaId: f.workAreaId.unwrap().optional(),
  reference: f.reference.unwrap().optional(),
  archived: z.boolean({ error: 'Choose yes or no.' }).optional(),
}).refine(v => Object.values(v).some(value => value !== undefined), { message: 'Nothing to change.' })
