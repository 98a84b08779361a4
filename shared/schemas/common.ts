import { z } from 'zod'

/** Route params that name one row: a UUID, checked before any query runs. */
export const idParamsSchema = z.object({ id: z.uuid('That id is not valid.') })
