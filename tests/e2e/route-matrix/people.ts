// Role × route entries for the people pages and a learner's own training (issue 6, items 5 and 8).
import { missingId, type Entry } from '../../support/route-matrix'

export const entries: Record<string, Entry> = {
  'GET /api/learners/training': { access: ['admin', 'coach', 'auditor'] },
  // A learner may call it for their own roster entry only (403 for anyone else's: tests/e2e/people.test.ts).
  'GET /api/learners/[id]/history': { access: 'signed-in', path: () => `/api/learners/${missingId()}/history` },
  // Learners only; one without a roster entry gets 404 (tests/e2e/study.test.ts).
  'GET /api/me/training': { access: ['learner'] },
}
