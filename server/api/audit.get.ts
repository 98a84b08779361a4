// The organisation's audit log, newest first, 200 at a time. Admins and auditors.
import { desc, eq, lt, and } from 'drizzle-orm'
import { z } from 'zod'
import { auditLog, users } from '../db/schema'

const querySchema = z.object({ before: z.coerce.number().int().positive().optional() })

export default defineEventHandler(async (event) => {
  const { before } = queryValid(event, querySchema)
  const caller = await requireRole(event, 'admin', 'auditor')
  const db = await useDb()
  return db.select({ id: auditLog.id, action: auditLog.action, targetType: auditLog.targetType, targetId: auditLog.targetId, detail: auditLog.detail, at: auditLog.createdAt, actor: users.name })
    .from(auditLog)
    .leftJoin(users, eq(users.id, auditLog.actorUserId))
    .where(and(eq(auditLog.organisationId, caller.organisation.id), before ? lt(auditLog.createdAt, new Date(before)) : undefined))
    .orderBy(desc(auditLog.createdAt))
    .limit(200)
})
