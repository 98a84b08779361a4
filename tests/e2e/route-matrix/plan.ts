// Role × route entries for the plan (issue 6, item 1). Bodies are valid so the answer speaks of the role.
import { missingId, type Entry } from '../../support/route-matrix'

export const entries: Record<string, Entry> = {
  'GET /api/plan': { access: ['admin', 'coach', 'auditor'] },
  'GET /api/plan.csv': { access: ['admin', 'coach', 'auditor'] },
  'PUT /api/plan/[learnerId]/[jobId]': { access: ['admin', 'coach'], path: () => `/api/plan/${missingId()}/${missingId()}`, body: () => ({ targetDate: '2026-12-24', reason: 'turnover', note: '' }) },
  'DELETE /api/plan/[learnerId]/[jobId]': { access: ['admin', 'coach'], path: () => `/api/plan/${missingId()}/${missingId()}` },
}
