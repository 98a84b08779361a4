// The worker side of load-tablets.mjs: simulated tablets, each its own coach session, syncing
// lessons until the deadline — build a push of a few lessons' events, POST /api/sync, wait for the
// answer, repeat — and a ledger of what each sent and what each answer acknowledged.
//
// A push that fails (a non-2xx answer, a timeout, a dropped connection) stays on the tablet and is
// sent again, as the app's outbox does: after the answer's Retry-After (503), or after a second.
// After the deadline no new push starts; a push still failing is retried for up to `graceMs`, and
// whatever has no answer then is "unsettled": the server may or may not hold it.
import { Agent, request } from 'node:http'
import { performance } from 'node:perf_hooks'
import { parentPort, workerData } from 'node:worker_threads'
import { eventFingerprint } from './load-verify.mjs'
import { makeTablet } from './sync-records.mjs'

const { tablets, content, eventsPerPush, startAt, warmupMs, durationMs, timeoutMs, graceMs } = workerData
const measureFrom = startAt + warmupMs
const deadline = measureFrom + durationMs
const RETRY_AFTER_CAP_S = 30
const FAILURE_TEXT = 300 // characters of a failed answer kept for the report

const sleep = ms => new Promise(r => setTimeout(r, ms))

function post(agent, url, cookie, json) {
  return new Promise((resolve) => {
    const started = performance.now()
    const at = Date.now()
    const done = outcome => resolve({ at, ms: performance.now() - started, ...outcome })
    const req = request(`${url}/api/sync`, {
      method: 'POST',
      agent,
      timeout: timeoutMs,
      headers: { 'cookie': cookie, 'content-type': 'application/json', 'content-length': Buffer.byteLength(json), 'x-forwarded-for': '198.18.1.1' },
    }, (res) => {
      const chunks = []
      res.on('data', c => chunks.push(c))
      res.on('end', () => done({ status: res.statusCode, retryAfter: res.headers['retry-after'], text: Buffer.concat(chunks).toString('utf8') }))
      res.on('error', error => done({ error: String(error?.message ?? error) }))
    })
    req.on('timeout', () => req.destroy(Object.assign(new Error(`POST /api/sync timed out after ${timeoutMs} ms`), { timeout: true })))
    req.on('error', error => done({ error: String(error?.message ?? error), timeout: Boolean(error?.timeout) }))
    req.end(json)
  })
}

/** Seconds to wait from a Retry-After header (seconds or an HTTP date); 1 s when absent. */
function retryDelayMs(header) {
  if (header === undefined) return 1000
  const seconds = /^\d+$/.test(header) ? Number(header) : (Date.parse(header) - Date.now()) / 1000
  return Math.min(RETRY_AFTER_CAP_S, Math.max(0, Number.isFinite(seconds) ? seconds : 1)) * 1000
}

// Every request, for the figures: latency of those started in the measured window, answers
// completed in it, and each failure with what it said.
const latencies = []
let completedInWindow = 0
let requests = 0
const failures = []

// The ledger, over all tablets of this worker.
const sentEvents = new Map() // id → fingerprint
const ackedEvents = new Set()
const unsettledEvents = new Set()
// id → { acked: updatedAt of the newest acknowledged copy, sent / unsettled: updatedAt of every copy sent / left without an answer }
const lessons = new Map()
const rejected = []
let rejectedCount = 0
let unanswered = 0
let ackedUnknown = 0
let pushesSent = 0
let pushesSettled = 0
let pushesGivenUp = 0
let retries = 0

async function deliver(agent, tablet, push) {
  for (let attempt = 0; ; attempt++) {
    if (attempt > 0) retries++
    const res = await post(agent, tablet.url, tablet.cookie, push.json)
    requests++
    const end = res.at + res.ms
    if (res.at >= measureFrom && res.at < deadline) latencies.push(res.ms)
    if (end >= measureFrom && end < deadline) completedInWindow++
    if (res.status >= 200 && res.status < 300) return JSON.parse(res.text)
    failures.push({ server: tablet.label, status: res.status ?? null, timeout: Boolean(res.timeout), error: res.error ?? null, text: (res.text ?? '').slice(0, FAILURE_TEXT), measured: res.at >= measureFrom && res.at < deadline, at: res.at })
    const wait = res.status === undefined ? 1000 : retryDelayMs(res.retryAfter)
    if (Date.now() + wait > deadline + graceMs) return null
    await sleep(wait)
  }
}

async function runTablet(tablet, index) {
  const agent = new Agent({ keepAlive: true, maxSockets: 1 })
  const next = makeTablet(tablet.ids, content, tablet.seed).pushSource(tablet.learnerIds)
  try {
    while (Date.now() < deadline) {
      const push = next(eventsPerPush)
      for (const e of push.body.events) sentEvents.set(e.id, eventFingerprint(e))
      for (const l of push.body.lessons) {
        const entry = lessons.get(l.id) ?? { acked: null, sent: [], unsettled: [] }
        entry.sent.push(l.updatedAt)
        lessons.set(l.id, entry)
      }
      pushesSent++
      const answer = await deliver(agent, tablet, push)
      if (!answer) {
        pushesGivenUp++
        for (const e of push.body.events) unsettledEvents.add(e.id)
        for (const l of push.body.lessons) lessons.get(l.id).unsettled.push(l.updatedAt)
        continue
      }
      pushesSettled++
      const accepted = new Set(answer.accepted)
      const rejectedIds = new Set(answer.rejected.map(r => r.id))
      rejectedCount += answer.rejected.length
      for (const r of answer.rejected.slice(0, Math.max(0, 20 - rejected.length))) rejected.push({ ...r, server: tablet.label, tablet: index })
      const inPush = new Set()
      for (const e of push.body.events) {
        inPush.add(e.id)
        if (accepted.has(e.id)) ackedEvents.add(e.id)
        else if (!rejectedIds.has(e.id)) unanswered++
      }
      for (const l of push.body.lessons) {
        inPush.add(l.id)
        if (accepted.has(l.id)) lessons.get(l.id).acked = l.updatedAt
        else if (!rejectedIds.has(l.id)) unanswered++
      }
      for (const id of accepted) if (!inPush.has(id)) ackedUnknown++
    }
  }
  finally {
    agent.destroy()
  }
}

await sleep(Math.max(0, startAt - Date.now()))
try {
  await Promise.all(tablets.map((t, i) => runTablet(t, i)))
  parentPort.postMessage({
    latencies,
    completedInWindow,
    requests,
    failures,
    rejectedCount,
    rejected,
    unanswered,
    ackedUnknown,
    pushesSent,
    pushesSettled,
    pushesGivenUp,
    retries,
    sentEvents: [...sentEvents],
    ackedEvents: [...ackedEvents],
    unsettledEvents: [...unsettledEvents],
    lessons: [...lessons],
  })
}
catch (error) {
  parentPort.postMessage({ error: String(error?.stack ?? error) })
}
