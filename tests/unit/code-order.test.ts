// byCodeUnits (shared/utils/code-order.ts): the order of JavaScript's own `<` on strings
// (ECMAScript's IsLessThan compares UTF-16 code units), not a language's collation.
import { describe, expect, it } from 'vitest'
import { byCodeUnits } from '../../shared/utils/code-order'

describe('ordering machine strings by code units', () => {
  it('sorts ISO dates by date and ids by their characters', () => {
    expect(['2026-12-03', '2026-01-15', '2025-12-31'].sort(byCodeUnits)).toEqual(['2025-12-31', '2026-01-15', '2026-12-03'])
    expect(['b0-1', 'a9-2', 'a10-3'].sort(byCodeUnits)).toEqual(['a10-3', 'a9-2', 'b0-1'])
    expect(byCodeUnits('x', 'x')).toBe(0)
  })

  it('puts capitals before small letters, as code units do and a collation would not', () => {
    // U+0042 "B" is below U+0061 "a"; en-GB collation puts "a" first.
    expect(['a', 'B'].sort(byCodeUnits)).toEqual(['B', 'a'])
    expect(['a', 'B'].sort((x, y) => x.localeCompare(y, 'en-GB'))).toEqual(['a', 'B'])
  })
})
