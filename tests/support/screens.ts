// Every screen of the app (one per file under app/pages/), who opens it and with which real ids.
// tests/browser/walk.test.ts visits each one with every role that may open it, at both tablet
// shapes, photographs it and runs axe-core on it; tests/unit/screens-covered.test.ts fails when a
// page under app/pages/ is missing here (so a new page cannot go without an axe check) or when the
// roles here differ from the page's own definePageMeta({ roles }).
import { ROLES, type Role } from '../../shared/types/roles'

/** Real ids and tokens from the walk's data (the demo bakery plus what the walk starts itself). */
export interface WalkIds {
  jobId: string
  /** A published version of jobId, which has an older one to compare with. */
  versionId: string
  olderVersionId: string
  draftVersionId: string
  learnerId: string
  /** A finished lesson on the server, taught by the demo coach. */
  lessonId: string
  /** A finished lesson of the demo learner's own (a learner may open only theirs). */
  ownLessonId: string
  /** The demo learner's study cards: a version they were taught. */
  studyVersionId: string
  /** A lesson and a spot check started on this tablet by the role walking (lessons live on the tablet). */
  tabletLessonId: string
  tabletCheckId: string
  inviteToken: string
  resetToken: string
}

export type Visitor = Role | 'signed-out'

export interface Screen {
  /** The page file, relative to app/pages/. */
  file: string
  /** The route as the router names it (file path, or definePageMeta's own path). */
  route: string
  /** Who may open it: a signed-out visitor, or the roles of its definePageMeta (all when it names none). */
  visitors: readonly Visitor[]
  /** The path to visit for a visitor. */
  path: (ids: WalkIds, who: Visitor) => string
}

const SIGNED_IN = ROLES
const SIGNED_OUT = ['signed-out'] as const
const STAFF = ['admin', 'coach'] as const
const READ_ALL = ['admin', 'coach', 'auditor'] as const

export const SCREENS: Screen[] = [
  // Signed out (the public pages of app/middleware/auth.global.ts).
  { file: 'sign-in.vue', route: '/sign-in', visitors: SIGNED_OUT, path: () => '/sign-in' },
  { file: 'sign-up.vue', route: '/sign-up', visitors: SIGNED_OUT, path: () => '/sign-up' },
  { file: 'forgot-password.vue', route: '/forgot-password', visitors: SIGNED_OUT, path: () => '/forgot-password' },
  { file: 'reset-password.vue', route: '/reset-password', visitors: SIGNED_OUT, path: ids => `/reset-password?token=${ids.resetToken}` },
  { file: 'accept-invite.vue', route: '/accept-invite', visitors: SIGNED_OUT, path: ids => `/accept-invite?token=${ids.inviteToken}` },
  // The captured-mail page exists only where MAIL_CAPTURE_PAGE is on (development, the demo, tests).
  { file: 'dev/mail.vue', route: '/dev/mail', visitors: SIGNED_OUT, path: () => '/dev/mail' },
  // Signed in.
  { file: 'index.vue', route: '/', visitors: SIGNED_IN, path: () => '/' },
  { file: 'account.vue', route: '/account', visitors: SIGNED_IN, path: () => '/account' },
  { file: 'needs-connection.vue', route: '/needs-connection', visitors: SIGNED_IN, path: () => '/needs-connection?next=/plan' },
  { file: 'jobs/index.vue', route: '/jobs', visitors: SIGNED_IN, path: () => '/jobs' },
  { file: 'jobs/new.vue', route: '/jobs/new', visitors: STAFF, path: () => '/jobs/new' },
  { file: 'jobs/[id]/index.vue', route: '/jobs/:id', visitors: SIGNED_IN, path: ids => `/jobs/${ids.jobId}` },
  { file: 'jobs/[id]/compare.vue', route: '/jobs/:id/compare', visitors: SIGNED_IN, path: ids => `/jobs/${ids.jobId}/compare?from=${ids.olderVersionId}&to=${ids.versionId}` },
  { file: 'versions/[id]/index.vue', route: '/versions/:id', visitors: SIGNED_IN, path: ids => `/versions/${ids.versionId}` },
  { file: 'versions/[id]/print.vue', route: '/versions/:id/print', visitors: SIGNED_IN, path: ids => `/versions/${ids.versionId}/print` },
  { file: 'versions/[id]/edit.vue', route: '/versions/:id/edit', visitors: STAFF, path: ids => `/versions/${ids.draftVersionId}/edit` },
  { file: 'people/index.vue', route: '/people', visitors: READ_ALL, path: () => '/people' },
  { file: 'people/[id].vue', route: '/people/:id', visitors: READ_ALL, path: ids => `/people/${ids.learnerId}` },
  { file: 'plan/index.vue', route: '/plan', visitors: READ_ALL, path: () => '/plan' },
  { file: 'records/index.vue', route: '/records', visitors: READ_ALL, path: () => '/records' },
  { file: 'settings/index.vue', route: '/settings', visitors: ['admin'], path: () => '/settings' },
  { file: 'settings/members.vue', route: '/settings/members', visitors: ['admin'], path: () => '/settings/members' },
  { file: 'lessons/new.vue', route: '/lessons/new', visitors: STAFF, path: () => '/lessons/new' },
  { file: 'lessons/[id].vue', route: '/lessons/:id', visitors: STAFF, path: ids => `/lessons/${ids.tabletLessonId}` },
  // A finished demo lesson on the server, opened by a second coach's tablet.
  { file: 'lessons/observe/[id].vue', route: '/lessons/:id/observe', visitors: STAFF, path: ids => `/lessons/${ids.lessonId}/observe` },
  { file: 'lessons/review/[id]/index.vue', route: '/lessons/review/:id', visitors: SIGNED_IN, path: (ids, who) => `/lessons/review/${who === 'learner' ? ids.ownLessonId : ids.lessonId}` },
  { file: 'lessons/review/[id]/print.vue', route: '/lessons/review/:id/print', visitors: SIGNED_IN, path: (ids, who) => `/lessons/review/${who === 'learner' ? ids.ownLessonId : ids.lessonId}/print` },
  { file: 'checks/new.vue', route: '/checks/new', visitors: STAFF, path: () => '/checks/new' },
  { file: 'checks/[id].vue', route: '/checks/:id', visitors: STAFF, path: ids => `/checks/${ids.tabletCheckId}` },
  { file: 'study/index.vue', route: '/study', visitors: ['learner'], path: () => '/study' },
  { file: 'study/[versionId].vue', route: '/study/:versionId', visitors: ['learner'], path: ids => `/study/${ids.studyVersionId}` },
]

/** A screen's name for files and messages: its route with the parameters spelled out. */
export function screenName(screen: Screen): string {
  return screen.route === '/' ? 'today' : screen.route.slice(1).replace(/:/g, '').replace(/\//g, '-')
}
