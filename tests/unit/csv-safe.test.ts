// CSV formula injection: OWASP "CSV Injection" (owasp.org/www-community/attacks/CSV_Injection) says to
// prefix cells starting with = + - @ tab or carriage return with a single quote.
import { describe, expect, it } from 'vitest'
import { stringify } from 'csv-stringify/sync'
import { csvCell, neutraliseFormula } from '../../shared/utils/csv-safe'

describe('CSV cells', () => {
  it.each(['=HYPERLINK("http://x.example","go")', '+1+2', '-2+3', '@SUM(A1:A2)', '\tcmd', '\rcmd'])('neutralises %j', (value) => {
    expect(neutraliseFormula(value)).toBe(`'${value}`)
  })

  it('leaves ordinary text, numbers and empty values alone', () => {
    expect(neutraliseFormula('Change the slicer blade set')).toBe('Change the slicer blade set')
    expect(neutraliseFormula('a=b')).toBe('a=b')
    expect(csvCell(3)).toBe(3)
    expect(csvCell(null)).toBe('')
    expect(csvCell(undefined)).toBe('')
    expect(csvCell(Number.NaN)).toBe('')
  })

  it('still quotes a neutralised cell with a comma or quote in it (RFC 4180 through csv-stringify)', () => {
    const line = stringify([[csvCell('=1+2,"x"'), csvCell('plain')]])
    expect(line).toBe('"\'=1+2,""x""",plain\n')
  })
})
