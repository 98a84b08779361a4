// npm run audit — `npm audit --omit=dev`: fails on any high or critical advisory in what ships
// (the production dependencies). scripts/test.mjs runs it as a step of `npm test`.
//
// The advisories come from the registry's audit service (a POST to /-/npm/v1/security/advisories/
// bulk). Where that service cannot be reached — the registry mirror of the machine this was written
// on answers 405 to it — nothing can be judged: the step says NOT CHECKED plainly and passes, unless
// FOURFOLD_AUDIT_REQUIRED=1 makes that a failure too (set it where the service is reachable).
import { spawnSync } from 'node:child_process'
import { pathToFileURL } from 'node:url'

const FAILING = new Set(['high', 'critical'])

/**
 * What an `npm audit --json` report (npm 7+, auditReportVersion 2) says for this project:
 * `findings` (high or critical advisories, one line each), `clean`, or `unreachable` (npm printed
 * an error instead of a report).
 * @param {any} report
 * @returns {{ status: 'clean' | 'findings' | 'unreachable', counts: Record<string, number>, lines: string[] }}
 */
export function auditVerdict(report) {
  const counts = report?.metadata?.vulnerabilities
  if (!counts || typeof counts !== 'object') {
    const reason = report?.message || report?.error?.summary || 'npm printed no audit report'
    return { status: 'unreachable', counts: {}, lines: [String(reason)] }
  }
  const lines = Object.entries(report.vulnerabilities ?? {})
    .filter(([, v]) => FAILING.has(v?.severity))
    .map(([name, v]) => {
      const via = (v.via ?? []).map(x => typeof x === 'string' ? `through ${x}` : `${x.title ?? 'advisory'}${x.url ? ` (${x.url})` : ''}`).join('; ')
      const fix = v.fixAvailable === false ? 'no fix released yet' : v.fixAvailable === true ? 'fix: npm audit fix' : v.fixAvailable?.name ? `fix: ${v.fixAvailable.name}@${v.fixAvailable.version}${v.fixAvailable.isSemVerMajor ? ' (major)' : ''}` : 'fix: see the advisory'
      return `${name} ${v.range ?? ''} — ${v.severity}: ${via}; ${fix}`
    })
  return { status: lines.length ? 'findings' : 'clean', counts, lines }
}

function main() {
  const run = spawnSync('npm', ['audit', '--omit=dev', '--json'], { encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 })
  let report = null
  try {
    report = JSON.parse(run.stdout || 'null')
  }
  catch { /* not JSON: judged unreachable below */ }
  const verdict = auditVerdict(report ?? { message: (run.stderr || run.error?.message || '').trim().split('\n').pop() })
  const summary = Object.entries(verdict.counts).filter(([k]) => k !== 'total').map(([k, n]) => `${k} ${n}`).join(', ')
  if (verdict.status === 'findings') {
    console.error(`npm audit --omit=dev: high or critical advisories in production dependencies (${summary}):`)
    for (const line of verdict.lines) console.error(`  ${line}`)
    process.exit(1)
  }
  if (verdict.status === 'unreachable') {
    console.warn(`npm audit --omit=dev: NOT CHECKED — the registry's audit service could not be used (${verdict.lines[0]}).`)
    if (process.env.FOURFOLD_AUDIT_REQUIRED === '1') process.exit(1)
    return
  }
  console.log(`npm audit --omit=dev: no high or critical advisory (${summary}).`)
}

if (process.argv[1] && import.meta.url === pathToFileURL(process.argv[1]).href) main()
