import { z } from 'zod'
import { roleSchema } from './invites'

export const updateMemberSchema = z.object({ role: roleSchema })
