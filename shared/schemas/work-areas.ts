import { z } from 'zod'

export const workAreaSchema = z.object({
  name: z.string({ error: 'Enter a name for the work area.' }).trim().min(1, 'Enter a name for the work area.').max(80, 'Keep the name under 80 characters.'),
})
