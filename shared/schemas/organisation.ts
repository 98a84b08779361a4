import { z } from 'zod'
import { organisationNameSchema } from './auth'

export const updateOrganisationSchema = z.object({
  name: organisationNameSchema.optional(),
  coachesMayPublish: z.boolean({ error: 'Choose yes or no.' }).optional(),
}).refine(v => v.name !== undefined || v.coachesMayPublish !== undefined, { message: 'Nothing to change.' })
