// CSV exports are opened in spreadsheets, which run a cell that starts with a formula character.
// OWASP "CSV Injection" guidance: prefix any cell beginning with =, +, -, @, tab (0x09) or
// carriage return (0x0D) with a single quote, so the spreadsheet shows it as text.
// csv-stringify then quotes and escapes the cell as RFC 4180 asks.
const FORMULA_START = /^[=+\-@\t\r]/

export function neutraliseFormula(value: string): string {
  return FORMULA_START.test(value) ? `'${value}` : value
}

/** A cell for a CSV export: numbers stay numbers; text, with a leading formula character neutralised. */
export function csvCell(value: string | number | null | undefined): string | number {
  if (value == null) return ''
  if (typeof value === 'number') return Number.isFinite(value) ? value : ''
  return neutraliseFormula(value)
}
