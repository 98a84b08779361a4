// The audit log: who did what to what, and when. Written in the same transaction as the change.
import { randomUUID } from 'node:crypto'
import { auditLog } from '../db/schema'

export interface AuditEntry {
  organisationId: string
  actorUserId: string | null
  action: string
  targetType: string
  targetId?: string | null
  detail?: Record<string, unknown>
}

type Writer = Pick<Db, 'insert'>

export async function recordAudit(tx: Writer, entry: AuditEntry) {
  await tx.insert(auditLog).values({ id: randomUUID(), ...entry, targetId: entry.targetId ?? null, detail: entry.detail ?? null })
}
