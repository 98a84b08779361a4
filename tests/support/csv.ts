// Reads a CSV answer back into rows for tests: RFC 4180 quoting ("" inside quotes), CRLF or LF
// line ends, and a leading UTF-8 byte order mark. Small on purpose; exports are checked with it.
export function parseCsv(text: string): string[][] {
  const rows: string[][] = []
  let row: string[] = []
  let cell = ''
  let quoted = false
  const src = text.startsWith('\uFEFF') ? text.slice(1) : text
  for (let i = 0; i < src.length; i++) {
    const ch = src[i]!
    if (quoted) {
      if (ch === '"' && src[i + 1] === '"') {
        cell += '"'
        i++
      }
      else if (ch === '"') quoted = false
      else cell += ch
    }
    else if (ch === '"') quoted = true
    else if (ch === ',') {
      row.push(cell)
      cell = ''
    }
    else if (ch === '\n' || ch === '\r') {
      if (ch === '\r' && src[i + 1] === '\n') i++
      row.push(cell)
      rows.push(row)
      row = []
      cell = ''
    }
    else cell += ch
  }
  if (cell !== '' || row.length) {
    row.push(cell)
    rows.push(row)
  }
  return rows
}
