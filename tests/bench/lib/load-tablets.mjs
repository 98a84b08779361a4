// Simulated tablets syncing lessons against one or more servers (load-tablet-worker.mjs), in
// worker threads so the caller's own work cannot stall their requests and be counted as the
// server's latency. Used by the load benchmark and by tests/e2e/two-instances-load.test.ts.
import { Worker } from 'node:worker_threads'

/**
 * Runs `tablets` ({ label, url, cookie, ids: { coachUserId, jobId, versionId }, learnerIds, seed })
 * from `startAt` (ms since the epoch) for `warmupMs` + `durationMs`, split over `threads` worker
 * threads; resolves with their figures and one ledger of what was sent and acknowledged.
 * `track(worker)` lets the caller stop the threads on Ctrl-C (lib/cleanup.mjs trackWorker).
 */
export async function runTablets({ tablets, content, eventsPerPush, startAt, warmupMs = 0, durationMs, timeoutMs = 30_000, graceMs = 30_000, threads = 2, track = w => w }) {
  const groups = Array.from({ length: Math.min(threads, tablets.length) }, (_, i) => tablets.filter((_, t) => t % threads === i))
  const results = await Promise.all(groups.map(group => new Promise((resolve, reject) => {
    const worker = track(new Worker(new URL('./load-tablet-worker.mjs', import.meta.url), {
      workerData: { tablets: group, content, eventsPerPush, startAt, warmupMs, durationMs, timeoutMs, graceMs },
    }))
    worker.once('message', message => (message.error ? reject(new Error(message.error)) : resolve(message)))
    worker.once('error', reject)
    worker.once('exit', code => reject(new Error(`a tablet worker exited (${code}) before answering`)))
  })))
  const sum = key => results.reduce((n, r) => n + r[key], 0)
  return {
    latencies: results.flatMap(r => r.latencies),
    completedInWindow: sum('completedInWindow'),
    requests: sum('requests'),
    failures: results.flatMap(r => r.failures),
    rejectedCount: sum('rejectedCount'),
    rejected: results.flatMap(r => r.rejected),
    unanswered: sum('unanswered'),
    ackedUnknown: sum('ackedUnknown'),
    pushesSent: sum('pushesSent'),
    pushesSettled: sum('pushesSettled'),
    pushesGivenUp: sum('pushesGivenUp'),
    retries: sum('retries'),
    ledger: {
      sentEvents: new Map(results.flatMap(r => r.sentEvents)),
      ackedEvents: new Set(results.flatMap(r => r.ackedEvents)),
      unsettledEvents: new Set(results.flatMap(r => r.unsettledEvents)),
      lessons: new Map(results.flatMap(r => r.lessons)),
    },
  }
}

/** True for a failure that says the database was busy or locked (SQLITE_BUSY reaching a client). */
export const mentionsBusy = failure => /busy|locked/i.test(`${failure.text ?? ''} ${failure.error ?? ''}`)
