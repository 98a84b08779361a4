// The worker side of get-loop.mjs: GET loops until the main thread says stop, then every latency.
import { Agent, request } from 'node:http'
import { performance } from 'node:perf_hooks'
import { parentPort, workerData } from 'node:worker_threads'

const MAX_SAMPLES = 1_000_000

function get(agent, { url, cookie, timeoutMs }) {
  return new Promise((resolve, reject) => {
    const t = performance.now()
    const req = request(url, { agent, timeout: timeoutMs, headers: { cookie, 'x-forwarded-for': '198.18.0.2' } }, (res) => {
      const chunks = []
      res.on('data', c => chunks.push(c))
      res.on('end', () => resolve({ status: res.statusCode, text: Buffer.concat(chunks).toString('utf8'), ms: performance.now() - t }))
      res.on('error', reject)
    })
    req.on('timeout', () => req.destroy(new Error(`GET ${url} timed out after ${timeoutMs} ms`)))
    req.on('error', reject)
    req.end()
  })
}

const agent = new Agent({ keepAlive: true, maxSockets: workerData.loops })
const latencies = []
let running = true
parentPort.on('message', () => {
  running = false
})
const loop = async () => {
  while (running && latencies.length < MAX_SAMPLES) {
    const res = await get(agent, workerData)
    if (res.status !== 200) throw new Error(`GET ${workerData.url} answered ${res.status}: ${res.text.slice(0, 500)}`)
    latencies.push(res.ms)
    await new Promise(r => setTimeout(r, workerData.pauseMs))
  }
}
Promise.all(Array.from({ length: workerData.loops }, loop))
  .then(() => parentPort.postMessage({ latencies }), error => parentPort.postMessage({ error: String(error?.stack ?? error) }))
  .finally(() => agent.destroy())
