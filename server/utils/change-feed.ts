// Every write a tablet must hear about adds a row to the change feed in the same transaction;
// GET /api/sync?since= reads the feed. Rowids grow in commit order because SQLite has one writer.
import { and, eq, ne } from 'drizzle-orm'
import { breakdownVersions, changeFeed } from '../db/schema'

type Writer = Pick<Db, 'insert'>
export type FeedEntity = 'lesson' | 'version' | 'learner' | 'plan'

export async function recordChange(tx: Writer, organisationId: string, entity: FeedEntity, entityId: string) {
  await tx.insert(changeFeed).values({ organisationId, entity, entityId })
}

/** A job's fields travel with its published version to the tablets, so a job edit is a version change. */
export async function recordJobChange(tx: Pick<Db, 'insert' | 'select'>, organisationId: string, jobId: string) {
  const rows = await tx.select({ id: breakdownVersions.id }).from(breakdownVersions)
    .where(and(eq(breakdownVersions.organisationId, organisationId), eq(breakdownVersions.jobId, jobId), ne(breakdownVersions.status, 'draft')))
  for (const row of rows) await recordChange(tx, organisationId, 'version', row.id)
}
