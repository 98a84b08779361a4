import { z } from 'zod'

export const updateOrganisationSchema = z.object({
  name: z.string({ error: 'Enter the organisation\'s name.' }).trim().min(2, 'Enter the organisation\'s name.').max(120, 'Keep the name under 120 characters.').optional(),
  coachesMayPublish: z.boolean({ error: 'Choose yes or no.' }).optional(),
}).refine(v => v.name !== undefined || v.coachesMayPublish !== undefined, { message: 'Nothing to change.' })
