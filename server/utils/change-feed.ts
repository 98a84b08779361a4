// Every write a tablet must hear about adds a row to the change feed in the same transaction;
// GET /api/sync?since= reads the feed. Rowids grow in commit order because SQLite has one writer.
import { changeFeed } from '../db/schema'

type Writer = Pick<Db, 'insert'>
export type FeedEntity = 'lesson' | 'version' | 'learner' | 'plan'

export async function recordChange(tx: Writer, organisationId: string, entity: FeedEntity, entityId: string) {
  await tx.insert(changeFeed).values({ organisationId, entity, entityId })
}
