// The npm audit step (scripts/audit.mjs) judged on reports of the shape npm 7+ prints for
// `npm audit --json` (auditReportVersion 2: `vulnerabilities` by package, `metadata.vulnerabilities`
// counts; shape from memory of npm's output, the packages and advisories below are invented), and
// on the error npm prints when the audit service answers 405 (as captured on this machine, host left out).
import { describe, expect, it } from 'vitest'
import { auditVerdict } from '../../scripts/audit.mjs'

const counts = (c: Partial<Record<'info' | 'low' | 'moderate' | 'high' | 'critical', number>>) => {
  const all = { info: 0, low: 0, moderate: 0, high: 0, critical: 0, ...c }
  return { ...all, total: Object.values(all).reduce((a, b) => a + b, 0) }
}

function report(vulnerabilities: Record<string, unknown>, c: Parameters<typeof counts>[0]) {
  return { auditReportVersion: 2, vulnerabilities, metadata: { vulnerabilities: counts(c), dependencies: { prod: 10, total: 10 } } }
}

describe('the npm audit step', () => {
  it('passes a report with nothing, or only low and moderate advisories', () => {
    expect(auditVerdict(report({}, {})).status).toBe('clean')
    const moderate = report({ 'example-parser': { name: 'example-parser', severity: 'moderate', via: [{ title: 'Slow regular expression', url: 'https://advisories.example/1' }], range: '<2.0.1', fixAvailable: true } }, { moderate: 1 })
    expect(auditVerdict(moderate)).toMatchObject({ status: 'clean', lines: [] })
  })

  it('fails on a high or a critical advisory, naming the package, the advisory and the fix', () => {
    const found = report({
      'example-parser': { name: 'example-parser', severity: 'critical', via: [{ title: 'Prototype pollution', url: 'https://advisories.example/2' }], range: '<3.1.0', fixAvailable: { name: 'example-parser', version: '3.1.0', isSemVerMajor: false } },
      'example-wrapper': { name: 'example-wrapper', severity: 'high', via: ['example-parser'], range: '1.x', fixAvailable: false },
      'example-logger': { name: 'example-logger', severity: 'low', via: [{ title: 'Log forging' }], range: '*', fixAvailable: true },
    }, { critical: 1, high: 1, low: 1 })
    const verdict = auditVerdict(found)
    expect(verdict.status).toBe('findings')
    expect(verdict.lines).toHaveLength(2)
    expect(verdict.lines[0]).toBe('example-parser <3.1.0 — critical: Prototype pollution (https://advisories.example/2); fix: example-parser@3.1.0')
    expect(verdict.lines[1]).toBe('example-wrapper 1.x — high: through example-parser; no fix released yet')
  })

  it('says it could not check when npm printed an error instead of a report', () => {
    const refused = { message: '405 Method Not Allowed - POST https://registry.example/-/npm/v1/security/advisories/bulk', statusCode: 405, error: { summary: '', detail: '' } }
    expect(auditVerdict(refused)).toEqual({ status: 'unreachable', counts: {}, lines: [refused.message] })
    expect(auditVerdict(null).status).toBe('unreachable')
  })
})
