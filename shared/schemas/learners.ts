import { z } from 'zod'
import { personNameSchema } from './auth'

export const learnerFieldsSchema = z.object({
  name: personNameSchema,
  workAreaId: z.uuid('Choose a work area from the list.').nullable().default(null),
  reference: z.string().trim().max(60, 'Keep the reference under 60 characters.').default(''),
})

export const createLearnerSchema = learnerFieldsSchema
export const updateLearnerSchema = learnerFieldsSchema.partial().extend({
  archived: z.boolean({ error: 'Choose yes or no.' }).optional(),
}).refine(v => Object.keys(v).length > 0, { message: 'Nothing to change.' })
