// The one Drizzle schema. Every organisation-scoped table carries organisation_id,
// and every query against it filters by the caller's organisation (see requireRole).
import { sql } from 'drizzle-orm'
import { index, integer, real, sqliteTable, text, uniqueIndex } from 'drizzle-orm/sqlite-core'
import { ROLES } from '../../shared/types/roles'
import { VERSION_STATUSES, type HazardCategory } from '../../shared/types/breakdown'
import { PLAN_REASONS } from '../../shared/types/plan'
import type { BreakdownContent } from '../../shared/schemas/breakdown'

const id = () => text('id').primaryKey()
const createdAt = () => integer('created_at', { mode: 'timestamp_ms' }).notNull().default(sql`(unixepoch('subsec') * 1000)`)

export const organisations = sqliteTable('organisations', {
  id: id(),
  name: text('name').notNull(),
  coachesMayPublish: integer('coaches_may_publish', { mode: 'boolean' }).notNull().default(false),
  createdAt: createdAt(),
})

export const users = sqliteTable('users', {
  id: id(),
  // Stored lower-cased: one address, one account.
  email: text('email').notNull(),
  name: text('name').notNull(),
  passwordHash: text('password_hash').notNull(),
  // Sessions issued before this instant are refused (password change, reset).
  passwordChangedAt: integer('password_changed_at', { mode: 'timestamp_ms' }).notNull(),
  createdAt: createdAt(),
}, t => [uniqueIndex('users_email_unique').on(t.email)])

export const memberships = sqliteTable('memberships', {
  id: id(),
  organisationId: text('organisation_id').notNull().references(() => organisations.id, { onDelete: 'cascade' }),
  userId: text('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  role: text('role', { enum: ROLES }).notNull(),
  // The daily reminder e-mail (checks due, plan items late); each person can turn it off.
  digestEmails: integer('digest_emails', { mode: 'boolean' }).notNull().default(true),
  createdAt: createdAt(),
}, t => [
  uniqueIndex('memberships_user_unique').on(t.userId),
  index('memberships_org_idx').on(t.organisationId),
])

export const invites = sqliteTable('invites', {
  id: id(),
  organisationId: text('organisation_id').notNull().references(() => organisations.id, { onDelete: 'cascade' }),
  email: text('email').notNull(),
  role: text('role', { enum: ROLES }).notNull(),
  // Only a SHA-256 of the token is kept; the token itself lives in the e-mail.
  tokenHash: text('token_hash').notNull(),
  invitedBy: text('invited_by').references(() => users.id, { onDelete: 'set null' }),
  // Inviting someone already in the roster links their new account to that roster entry.
  learnerId: text('learner_id'),
  expiresAt: integer('expires_at', { mode: 'timestamp_ms' }).notNull(),
  acceptedAt: integer('accepted_at', { mode: 'timestamp_ms' }),
  revokedAt: integer('revoked_at', { mode: 'timestamp_ms' }),
  createdAt: createdAt(),
}, t => [
  uniqueIndex('invites_token_unique').on(t.tokenHash),
  index('invites_org_idx').on(t.organisationId),
])

export const passwordResets = sqliteTable('password_resets', {
  id: id(),
  userId: text('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  tokenHash: text('token_hash').notNull(),
  expiresAt: integer('expires_at', { mode: 'timestamp_ms' }).notNull(),
  usedAt: integer('used_at', { mode: 'timestamp_ms' }),
  createdAt: createdAt(),
}, t => [uniqueIndex('password_resets_token_unique').on(t.tokenHash)])

export const workAreas = sqliteTable('work_areas', {
  id: id(),
  organisationId: text('organisation_id').notNull().references(() => organisations.id, { onDelete: 'cascade' }),
  name: text('name').notNull(),
  createdAt: createdAt(),
}, t => [uniqueIndex('work_areas_org_name_unique').on(t.organisationId, t.name)])

export const auditLog = sqliteTable('audit_log', {
  id: id(),
  organisationId: text('organisation_id').notNull().references(() => organisations.id, { onDelete: 'cascade' }),
  actorUserId: text('actor_user_id').references(() => users.id, { onDelete: 'set null' }),
  action: text('action').notNull(),
  targetType: text('target_type').notNull(),
  targetId: text('target_id'),
  detail: text('detail', { mode: 'json' }).$type<Record<string, unknown>>(),
  createdAt: createdAt(),
}, t => [index('audit_log_org_time_idx').on(t.organisationId, t.createdAt)])

// Failed sign-ins, kept in the database (not in memory) so every app instance
// sees the same count. Old rows are pruned when new ones are written.
export const signInFailures = sqliteTable('sign_in_failures', {
  id: integer('id').primaryKey({ autoIncrement: true }),
  scope: text('scope', { enum: ['account', 'address'] }).notNull(),
  key: text('key').notNull(),
  at: integer('at', { mode: 'timestamp_ms' }).notNull(),
}, t => [index('sign_in_failures_key_idx').on(t.scope, t.key, t.at)])

export type Organisation = typeof organisations.$inferSelect
export type User = typeof users.$inferSelect
export type Membership = typeof memberships.$inferSelect
export type Invite = typeof invites.$inferSelect
export type WorkArea = typeof workAreas.$inferSelect

// ---- Jobs and breakdowns ----------------------------------------------------------------

export const jobs = sqliteTable('jobs', {
  id: id(),
  organisationId: text('organisation_id').notNull().references(() => organisations.id, { onDelete: 'cascade' }),
  workAreaId: text('work_area_id').references(() => workAreas.id, { onDelete: 'set null' }),
  title: text('title').notNull(),
  purpose: text('purpose').notNull().default(''),
  hazards: text('hazards', { mode: 'json' }).$type<Array<{ category: HazardCategory, description: string }>>().notNull().default(sql`'[]'`),
  ppe: text('ppe', { mode: 'json' }).$type<string[]>().notNull().default(sql`'[]'`),
  toolsAndMaterials: text('tools_and_materials', { mode: 'json' }).$type<string[]>().notNull().default(sql`'[]'`),
  workplaceArrangement: text('workplace_arrangement').notNull().default(''),
  // How many people the job needs ready (coverage target).
  coverageTarget: integer('coverage_target').notNull().default(2),
  archivedAt: integer('archived_at', { mode: 'timestamp_ms' }),
  createdAt: createdAt(),
  updatedAt: integer('updated_at', { mode: 'timestamp_ms' }).notNull().default(sql`(unixepoch('subsec') * 1000)`),
}, t => [index('jobs_org_idx').on(t.organisationId)])

export const breakdownVersions = sqliteTable('breakdown_versions', {
  id: id(),
  organisationId: text('organisation_id').notNull().references(() => organisations.id, { onDelete: 'cascade' }),
  jobId: text('job_id').notNull().references(() => jobs.id, { onDelete: 'cascade' }),
  // 1, 2, 3 … per job, in the order drafts were started.
  number: integer('number').notNull(),
  status: text('status', { enum: VERSION_STATUSES }).notNull().default('draft'),
  content: text('content', { mode: 'json' }).$type<BreakdownContent>().notNull(),
  // Optimistic-concurrency counter: every saved edit adds one; a save based on an older one is refused.
  revision: integer('revision').notNull().default(0),
  changeNote: text('change_note'),
  basedOnVersionId: text('based_on_version_id'),
  createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
  publishedBy: text('published_by').references(() => users.id, { onDelete: 'set null' }),
  publishedAt: integer('published_at', { mode: 'timestamp_ms' }),
  retiredAt: integer('retired_at', { mode: 'timestamp_ms' }),
  createdAt: createdAt(),
  updatedAt: integer('updated_at', { mode: 'timestamp_ms' }).notNull().default(sql`(unixepoch('subsec') * 1000)`),
}, t => [
  uniqueIndex('breakdown_versions_job_number_unique').on(t.jobId, t.number),
  index('breakdown_versions_org_idx').on(t.organisationId),
])

export const uploads = sqliteTable('uploads', {
  id: id(),
  organisationId: text('organisation_id').notNull().references(() => organisations.id, { onDelete: 'cascade' }),
  // Keys in Nitro storage ('photos' mount): the re-encoded image and its thumbnail.
  storageKey: text('storage_key').notNull(),
  thumbKey: text('thumb_key').notNull(),
  mime: text('mime').notNull(),
  width: integer('width').notNull(),
  height: integer('height').notNull(),
  bytes: integer('bytes').notNull(),
  createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
  createdAt: createdAt(),
}, t => [index('uploads_org_idx').on(t.organisationId)])

export type Job = typeof jobs.$inferSelect
export type BreakdownVersion = typeof breakdownVersions.$inferSelect
export type Upload = typeof uploads.$inferSelect

// ---- Roster -----------------------------------------------------------------------------

// A learner in the roster need not have an account; inviting them links one (userId).
export const learners = sqliteTable('learners', {
  id: id(),
  organisationId: text('organisation_id').notNull().references(() => organisations.id, { onDelete: 'cascade' }),
  name: text('name').notNull(),
  userId: text('user_id').references(() => users.id, { onDelete: 'set null' }),
  workAreaId: text('work_area_id').references(() => workAreas.id, { onDelete: 'set null' }),
  // The organisation's own reference (staff number, badge), optional.
  reference: text('reference').notNull().default(''),
  archivedAt: integer('archived_at', { mode: 'timestamp_ms' }),
  createdAt: createdAt(),
  updatedAt: integer('updated_at', { mode: 'timestamp_ms' }).notNull().default(sql`(unixepoch('subsec') * 1000)`),
}, t => [index('learners_org_idx').on(t.organisationId)])

export type Learner = typeof learners.$inferSelect

// ---- Lessons and sync -------------------------------------------------------------------

// A lesson as the tablets send it. Its id is made on the tablet. Fields merge last-writer-wins
// by (signed off first, then client time, then device id); see server/utils/sync-merge.ts.
export const lessons = sqliteTable('lessons', {
  id: id(),
  organisationId: text('organisation_id').notNull().references(() => organisations.id, { onDelete: 'cascade' }),
  coachUserId: text('coach_user_id').references(() => users.id, { onDelete: 'set null' }),
  learnerId: text('learner_id').notNull().references(() => learners.id, { onDelete: 'cascade' }),
  jobId: text('job_id').notNull().references(() => jobs.id, { onDelete: 'cascade' }),
  versionId: text('version_id').notNull().references(() => breakdownVersions.id, { onDelete: 'cascade' }),
  place: text('place').notNull().default(''),
  startedAt: integer('started_at', { mode: 'timestamp_ms' }).notNull(),
  prepare: text('prepare', { mode: 'json' }).$type<Record<string, { done: boolean, note: string }>>().notNull().default(sql`'{}'`),
  helper: text('helper').notNull().default(''),
  decision: text('decision', { enum: ['ready', 'another-pass'] }),
  acknowledgement: text('acknowledgement', { mode: 'json' }).$type<{ name: string, signature: string | null, at: number } | null>(),
  signedOffAt: integer('signed_off_at', { mode: 'timestamp_ms' }),
  stageSeconds: text('stage_seconds', { mode: 'json' }).$type<Record<string, number>>().notNull().default(sql`'{}'`),
  // A refresher after a new version: only these element ids are presented and tried; null is the whole job.
  focus: text('focus', { mode: 'json' }).$type<string[] | null>(),
  clientUpdatedAt: integer('client_updated_at').notNull(),
  updatedByDevice: text('updated_by_device').notNull(),
  createdAt: createdAt(),
}, t => [
  index('lessons_org_idx').on(t.organisationId),
  index('lessons_learner_idx').on(t.organisationId, t.learnerId),
  // The records list, newest first: an organisation's whole list is read in this order (records-query.ts).
  index('lessons_org_started_idx').on(t.organisationId, t.startedAt, t.id),
])

// Append-only marks and moves of a lesson (DESIGN.md §7). Undo is another event.
export const lessonEvents = sqliteTable('lesson_events', {
  id: id(),
  organisationId: text('organisation_id').notNull(),
  lessonId: text('lesson_id').notNull().references(() => lessons.id, { onDelete: 'cascade' }),
  pass: text('pass').notNull(),
  elementId: text('element_id'),
  kind: text('kind').notNull(),
  value: text('value'),
  clientTime: integer('client_time').notNull(),
  deviceId: text('device_id').notNull(),
  seq: integer('seq').notNull(),
  receivedAt: integer('received_at').notNull(),
}, t => [index('lesson_events_lesson_idx').on(t.lessonId)])

// Scores materialised at sync by the same shared/utils functions the tablet uses.
export const lessonScores = sqliteTable('lesson_scores', {
  lessonId: text('lesson_id').primaryKey().references(() => lessons.id, { onDelete: 'cascade' }),
  organisationId: text('organisation_id').notNull(),
  t1: real('t1'),
  t2: real('t2'),
  t3: real('t3'),
  t4: real('t4'),
  orderScore: real('order_score'),
  recall: real('recall'),
  readiness: text('readiness', { enum: ['ready', 'another-pass'] }).notNull(),
  represent: text('represent', { mode: 'json' }).$type<unknown[]>().notNull(),
  eventCount: integer('event_count').notNull(),
  computedAt: integer('computed_at').notNull(),
}, t => [index('lesson_scores_org_idx').on(t.organisationId)])

// What changed, in commit order, for GET /api/sync?since=. The rowid is the cursor.
export const changeFeed = sqliteTable('change_feed', {
  seq: integer('seq').primaryKey({ autoIncrement: true }),
  organisationId: text('organisation_id').notNull(),
  entity: text('entity', { enum: ['lesson', 'version', 'learner', 'plan', 'check'] }).notNull(),
  entityId: text('entity_id').notNull(),
}, t => [index('change_feed_org_seq_idx').on(t.organisationId, t.seq)])

export type Lesson = typeof lessons.$inferSelect
export type LessonEventRow = typeof lessonEvents.$inferSelect

// ---- Plan, spot checks, reminders (issue 6) ---------------------------------------------

// One row per learner × job that is needed. No row means "not needed"; the cell's other states
// (in training, ready, check due, re-teach, late) are derived from lessons and checks.
export const planItems = sqliteTable('plan_items', {
  id: id(),
  organisationId: text('organisation_id').notNull().references(() => organisations.id, { onDelete: 'cascade' }),
  learnerId: text('learner_id').notNull().references(() => learners.id, { onDelete: 'cascade' }),
  jobId: text('job_id').notNull().references(() => jobs.id, { onDelete: 'cascade' }),
  // A calendar date, YYYY-MM-DD, in the organisation's own days (no time zone arithmetic).
  targetDate: text('target_date'),
  reason: text('reason', { enum: PLAN_REASONS }).notNull(),
  note: text('note').notNull().default(''),
  createdBy: text('created_by').references(() => users.id, { onDelete: 'set null' }),
  createdAt: createdAt(),
  updatedAt: integer('updated_at', { mode: 'timestamp_ms' }).notNull().default(sql`(unixepoch('subsec') * 1000)`),
}, t => [
  uniqueIndex('plan_items_learner_job_unique').on(t.organisationId, t.learnerId, t.jobId),
  index('plan_items_job_idx').on(t.organisationId, t.jobId),
])

// A spot check as the tablets send it (id made on the tablet), merged like a lesson: fields
// last-writer-wins by (finished, client time, device id). Its marks are check_events.
export const spotChecks = sqliteTable('spot_checks', {
  id: id(),
  organisationId: text('organisation_id').notNull().references(() => organisations.id, { onDelete: 'cascade' }),
  coachUserId: text('coach_user_id').references(() => users.id, { onDelete: 'set null' }),
  learnerId: text('learner_id').notNull().references(() => learners.id, { onDelete: 'cascade' }),
  jobId: text('job_id').notNull().references(() => jobs.id, { onDelete: 'cascade' }),
  versionId: text('version_id').notNull().references(() => breakdownVersions.id, { onDelete: 'cascade' }),
  // The lesson this check follows up, when known.
  lessonId: text('lesson_id'),
  startedAt: integer('started_at', { mode: 'timestamp_ms' }).notNull(),
  // Element ids (step or key point ids) the coach chose to check; key point ids may carry
  // a ":reason" suffix for "tells the reason".
  elements: text('elements', { mode: 'json' }).$type<string[]>().notNull().default(sql`'[]'`),
  note: text('note').notNull().default(''),
  finishedAt: integer('finished_at', { mode: 'timestamp_ms' }),
  // Computed on the server from the marks with shared/utils (checkOutcome), never sent.
  outcome: text('outcome', { enum: ['clean', 'stay', 'reteach'] }),
  // The taper step this check was due at (index into SPOT_CHECK_INTERVAL_DAYS) and the next one.
  intervalIndex: integer('interval_index').notNull().default(0),
  nextIntervalIndex: integer('next_interval_index'),
  nextDueAt: integer('next_due_at'),
  clientUpdatedAt: integer('client_updated_at').notNull(),
  updatedByDevice: text('updated_by_device').notNull(),
  createdAt: createdAt(),
}, t => [
  index('spot_checks_org_idx').on(t.organisationId),
  index('spot_checks_learner_job_idx').on(t.organisationId, t.learnerId, t.jobId),
  index('spot_checks_org_started_idx').on(t.organisationId, t.startedAt, t.id),
])

// Append-only marks of a spot check; the same rules as lesson_events.
export const checkEvents = sqliteTable('check_events', {
  id: id(),
  organisationId: text('organisation_id').notNull(),
  checkId: text('check_id').notNull().references(() => spotChecks.id, { onDelete: 'cascade' }),
  elementId: text('element_id'),
  kind: text('kind').notNull(),
  value: text('value'),
  clientTime: integer('client_time').notNull(),
  deviceId: text('device_id').notNull(),
  seq: integer('seq').notNull(),
  receivedAt: integer('received_at').notNull(),
}, t => [index('check_events_check_idx').on(t.checkId)])

// Scheduled tasks take a lease here before they run, so two app instances never run one twice.
export const taskLeases = sqliteTable('task_leases', {
  name: text('name').primaryKey(),
  holder: text('holder').notNull(),
  expiresAt: integer('expires_at').notNull(),
})

// One reminder digest per person per day at most (the unique index is the guarantee).
export const digestSends = sqliteTable('digest_sends', {
  id: id(),
  organisationId: text('organisation_id').notNull().references(() => organisations.id, { onDelete: 'cascade' }),
  userId: text('user_id').notNull().references(() => users.id, { onDelete: 'cascade' }),
  day: text('day').notNull(),
  sentAt: integer('sent_at').notNull(),
}, t => [uniqueIndex('digest_sends_user_day_unique').on(t.userId, t.day)])

// Sessions ended by signing out. A session is a sealed cookie the server keeps no copy of, so a copy
// of one would work until it expires; requireSignedIn refuses the ids listed here. A row is needed
// only until the session would have expired anyway (expires_at), and is pruned after that.
export const endedSessions = sqliteTable('ended_sessions', {
  sessionId: text('session_id').primaryKey(),
  expiresAt: integer('expires_at').notNull(),
}, t => [index('ended_sessions_expires_idx').on(t.expiresAt)])

// Mail waiting to go out (server/utils/mail-outbox.ts): written in the same transaction as the
// invite, reset or digest it belongs to, deleted once the mail server has taken it, so an SMTP
// server that is down loses nothing. A row holds the mail itself (a one-time link included) only
// until it is sent or expires_at passes (the link's own lifetime; a digest's day). The claim
// (claimed_by, claimed_until) decides which app instance sends it; digest_send_id is the
// digest_sends claim that becomes "sent" with it.
export const mailOutbox = sqliteTable('mail_outbox', {
  id: id(),
  organisationId: text('organisation_id').references(() => organisations.id, { onDelete: 'cascade' }),
  kind: text('kind', { enum: ['invite', 'reset', 'digest'] }).notNull(),
  recipient: text('recipient').notNull(),
  subject: text('subject').notNull(),
  text: text('text').notNull(),
  html: text('html').notNull(),
  digestSendId: text('digest_send_id').references(() => digestSends.id, { onDelete: 'cascade' }),
  createdAt: integer('created_at').notNull(),
  expiresAt: integer('expires_at').notNull(),
  attempts: integer('attempts').notNull().default(0),
  nextAttemptAt: integer('next_attempt_at').notNull(),
  claimedBy: text('claimed_by'),
  claimedUntil: integer('claimed_until'),
  lastError: text('last_error'),
}, t => [index('mail_outbox_next_idx').on(t.nextAttemptAt)])

export type PlanItem = typeof planItems.$inferSelect
export type SpotCheck = typeof spotChecks.$inferSelect
export type CheckEventRow = typeof checkEvents.$inferSelect
