// Every roster learner's training at a glance (jobs ready for, checks due, re-teach, late). Coaches, admins, auditors.
import type { RosterTraining } from '../../../shared/types/people'
import { rosterTraining } from '../../../shared/utils/person-summary'

export default defineEventHandler(async (event): Promise<RosterTraining[]> => {
  const caller = await requireRole(event, 'admin', 'coach', 'auditor')
  const db = await useDb()
  const states = await jobStatesByLearner(db, caller.organisation.id)
  return [...states.entries()].map(([learnerId, jobs]) => rosterTraining(learnerId, jobs))
})
