import { z } from 'zod'

/** A signed-in person's own settings (PATCH /api/me/settings). Only what they name changes. */
export const meSettingsSchema = z.strictObject({
  digestEmails: z.boolean({ error: 'Choose on or off.' }),
}, { error: 'Only the daily digest setting can be changed here.' })

export type MeSettings = z.output<typeof meSettingsSchema>
