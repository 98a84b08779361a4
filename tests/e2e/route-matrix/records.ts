// Role × route entries for the records list and its export (issue 6, item 6).
import type { Entry } from '../../support/route-matrix'

export const entries: Record<string, Entry> = {
  'GET /api/records': { access: ['admin', 'coach', 'auditor'] },
  'GET /api/records.csv': { access: ['admin', 'coach', 'auditor'] },
  'GET /api/records/coaches': { access: ['admin', 'coach', 'auditor'] },
}
