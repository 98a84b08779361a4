// The one Drizzle schema. Every organisation-scoped table carries organisation_id,
// and every query against it filters by the caller's organisation (see requireRole).
import { sql } from 'drizzle-orm'
import { index, integer, sqliteTable, text, uniqueIndex } from 'drizzle-orm/sqlite-core'
import { ROLES } from '../../shared/types/roles'

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
