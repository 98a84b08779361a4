// SQLite allows one writer. Two write transactions from this process would
// contend for the lock and, with a busy timeout, block the event loop inside
// the native call; queueing them here keeps the loop free. Other processes
// are covered by the busy timeout in useDb().
let tail: Promise<unknown> = Promise.resolve()

export function serialiseWrite<T>(work: () => Promise<T>): Promise<T> {
  const run = tail.then(work, work)
  tail = run.catch(() => undefined)
  return run
}

/** Runs `work` in one write transaction, queued behind every other write of this process. */
export async function writeTransaction<T>(work: (tx: Parameters<Parameters<Db['transaction']>[0]>[0]) => Promise<T>): Promise<T> {
  const db = await useDb()
  return serialiseWrite(() => db.transaction(work, { behavior: 'immediate' }))
}
