// Role × route entries for refreshers after a new breakdown version (issue 6, item 3).
import { missingId, type Entry } from '../../support/route-matrix'

export const entries: Record<string, Entry> = {
  'GET /api/jobs/[id]/retraining': { access: ['admin', 'coach', 'auditor'], path: () => `/api/jobs/${missingId()}/retraining` },
  'GET /api/retraining': { access: ['admin', 'coach', 'auditor'] },
}
