// Loops of GET requests in a worker thread, measuring each answer's latency. The worker has its
// own event loop and heap, so the benchmark's own work (building bodies, the raw inserts, its
// garbage collection) cannot stall the requests and be counted as the server's latency.
import { Worker } from 'node:worker_threads'
import { trackWorker } from './cleanup.mjs'

/**
 * Starts `loops` loops of GET `url` (each request after the previous answer and `pauseMs`);
 * stop() ends them and resolves with every latency in ms. Any answer but 200 fails stop().
 */
export function startGetLoops({ url, cookie, loops = 2, pauseMs = 5, timeoutMs = 30_000 }) {
  const worker = trackWorker(new Worker(new URL('./get-loop-worker.mjs', import.meta.url), { workerData: { url, cookie, loops, pauseMs, timeoutMs } }))
  const finished = new Promise((resolve, reject) => {
    worker.once('message', message => (message.error ? reject(new Error(message.error)) : resolve(message.latencies)))
    worker.once('error', reject)
    worker.once('exit', code => reject(new Error(`the GET worker exited (${code}) before answering`)))
  })
  // A failure is reported by stop(); until then it must not count as an unhandled rejection.
  finished.catch(() => {})
  const started = new Promise(resolve => worker.once('online', resolve))
  return {
    started,
    async stop() {
      worker.postMessage('stop')
      try {
        return await finished
      }
      finally {
        await worker.terminate()
      }
    },
  }
}
