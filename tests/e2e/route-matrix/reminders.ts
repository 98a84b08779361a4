// Role × route entries for the reminder digest and the person's own settings (issue 6, item 7).
import type { Entry } from '../../support/route-matrix'

export const entries: Record<string, Entry> = {
  // Every member sets their own; the setting only matters to coaches and admins.
  'PATCH /api/me/settings': { access: 'signed-in', body: () => ({ digestEmails: true }) },
  'POST /api/reminders/run': { access: ['admin'] },
}
