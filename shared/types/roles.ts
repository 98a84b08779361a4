export const ROLES = ['admin', 'coach', 'learner', 'auditor'] as const
export type Role = (typeof ROLES)[number]

/** Roles that may change training content and run lessons. */
export const STAFF_ROLES = ['admin', 'coach'] as const satisfies readonly Role[]
/** Roles that may read everything in the organisation. */
export const READ_ALL_ROLES = ['admin', 'coach', 'auditor'] as const satisfies readonly Role[]

export const ROLE_LABELS: Record<Role, string> = {
  admin: 'Admin',
  coach: 'Coach',
  learner: 'Learner',
  auditor: 'Auditor',
}
