// Figures and their presentation: percentiles, the server's CPU and memory from /proc, tables.
import { execFileSync } from 'node:child_process'
import { readFileSync } from 'node:fs'
import { loadavg } from 'node:os'

/** Nearest-rank percentile of an ascending list; NaN for an empty one. */
export function percentile(sorted, p) {
  if (!sorted.length) return Number.NaN
  return sorted[Math.min(sorted.length, Math.max(1, Math.ceil((p / 100) * sorted.length))) - 1]
}

// CPU time a process (all its threads) used, from /proc (Linux); null elsewhere.
let clockTicks
export function processCpuSeconds(pid) {
  try {
    clockTicks ??= Number(execFileSync('getconf', ['CLK_TCK'], { encoding: 'utf8' }).trim()) || 100
    // Fields after the ")" that closes the command name: utime and stime are the 12th and 13th.
    const stat = readFileSync(`/proc/${pid}/stat`, 'utf8')
    const fields = stat.slice(stat.lastIndexOf(')') + 2).split(' ')
    return (Number(fields[11]) + Number(fields[12])) / clockTicks
  }
  catch {
    return null
  }
}

/** VmRSS and VmHWM (the process's peak resident set so far) in MiB, from /proc (Linux); nulls elsewhere. */
export function processMemoryMb(pid) {
  try {
    const status = readFileSync(`/proc/${pid}/status`, 'utf8')
    const kb = name => Number(new RegExp(`^${name}:\\s+(\\d+) kB`, 'm').exec(status)?.[1])
    return { rss: kb('VmRSS') / 1024, hwm: kb('VmHWM') / 1024 }
  }
  catch {
    return { rss: null, hwm: null }
  }
}

/** A plain-text table: first column left-aligned, the others right-aligned. */
export function table(head, body) {
  const cells = body.map(row => row.map(String))
  const widths = head.map((h, i) => Math.max(h.length, ...cells.map(b => b[i].length)))
  const line = row => row.map((c, i) => (i === 0 ? c.padEnd(widths[i]) : c.padStart(widths[i]))).join('  ')
  return [line(head), widths.map(w => '-'.repeat(w)).join('  '), ...cells.map(line)].join('\n')
}

export const loadAverage = () => loadavg().map(n => n.toFixed(2)).join(' ')
export const round = (n, digits) => Number(n.toFixed(digits))
