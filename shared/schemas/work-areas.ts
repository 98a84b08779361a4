import { z } from 'zod'
import { isSingleLine } from './common'

export const workAreaSchema = z.object({
  name: z.string({ error: 'Enter a name for the work area.' }).trim().min(1, 'Enter a name for the work area.').max(80, 'Keep the name under 80 characters.')
    .refine(isSingleLine, 'Write the name on one line, without line breaks, tabs or other control characters.'),
})
