import fc from 'fast-check'
import { describe, expect, it } from 'vitest'
import { JsonPieces } from '../../server/utils/json-pieces'

/** Feeds `text` cut at the given places, as network chunks would arrive. */
function readInPieces(text: string, cuts: number[] = []): Record<string, unknown> | undefined {
  const reader = new JsonPieces()
  let at = 0
  for (const cut of [...new Set(cuts)].filter(c => c > 0 && c < text.length).sort((a, b) => a - b)) {
    reader.push(text.slice(at, cut))
    at = cut
  }
  reader.push(text.slice(at))
  return reader.finish()
}

const cutsOf = (length: number) => fc.array(fc.integer({ min: 0, max: Math.max(0, length) }), { maxLength: 12 })

describe('reading a JSON object in pieces', () => {
  it('gives exactly what JSON.parse gives, however the text is cut (property test against JSON.parse itself)', () => {
    const member = fc.oneof(fc.jsonValue(), fc.array(fc.jsonValue(), { maxLength: 30 }))
    fc.assert(fc.property(fc.dictionary(fc.string(), member, { maxKeys: 6 }), fc.boolean(), fc.integer({ min: 0, max: 1000 }), (object, spaced, seed) => {
      const text = spaced ? JSON.stringify(object, null, 2) : JSON.stringify(object)
      const cuts = fc.sample(cutsOf(text.length), { seed, numRuns: 1 })[0]!
      const expected = JSON.parse(text) as Record<string, unknown>
      // Keys JSON.parse and destr treat specially are left to the ordinary reading.
      if (/"(__proto__|constructor)"/.test(text)) return
      expect(readInPieces(text, cuts)).toEqual(expected)
    }), { numRuns: 400 })
  })

  it('reads a push of thousands of events cut into 64 KiB chunks', () => {
    const events = Array.from({ length: 5000 }, (_, i) => ({ id: `e${i}`, lessonId: 'l', pass: 'T1-1', elementId: `s${i % 7}`, kind: 'mark', value: i % 3 ? 'unaided' : 'cued, "quoted" ]}', clientTime: 1_700_000_000_000 + i, deviceId: 'd', seq: i }))
    const body = { deviceId: 'd', lessons: [{ id: 'l', prepare: { a: { done: true, note: '[{,' } } }], checks: [], events }
    const text = JSON.stringify(body)
    const cuts = Array.from({ length: Math.floor(text.length / 65536) }, (_, i) => (i + 1) * 65536)
    expect(readInPieces(text, cuts)).toEqual(body)
  })

  it('answers nothing (the ordinary reading decides) for text JSON.parse refuses or that is not an object', () => {
    for (const text of ['', '[1,2]', '"text"', '42', 'null', '{', '{"a":1', '{"a":1,}', '{"a":[1,]}', '{"a":[1,,2]}', '{"a" 1}', '{a:1}', '{"a":1}x', '{"a":[1 2]}', '{"a":{"b":}}', '{"a":[}', '{"a":1]', '\uFEFF{"a":1}', '{"a":tru}', '{"a":[1],,"b":2}']) {
      expect(readInPieces(text), text).toBeUndefined()
      expect(readInPieces(text, [1, 3, 5]), text).toBeUndefined()
    }
    expect(readInPieces('{}')).toEqual({})
    expect(readInPieces(' \n{ "a" : [ ] , "b" : [ 1 , {"c":[2]} ] }\n ', [3, 9])).toEqual({ a: [], b: [1, { c: [2] }] })
    expect(readInPieces('{"a":1,"a":[2]}')).toEqual({ a: [2] })
  })

  it('leaves "__proto__" and "constructor" keys, escaped or not, at any depth, to the ordinary reading (destr refuses them)', () => {
    for (const text of ['{"__proto__":{"x":1}}', '{"a":[{"__proto__":1}]}', '{"a":[{"b":{"constructor":{"prototype":1}}}]}', '{"\\u005f_proto__" :1}', '{"a":{"constructor"\n:1}}']) {
      expect(readInPieces(text), text).toBeUndefined()
      expect(readInPieces(text, [2, 8, 12]), text).toBeUndefined()
    }
  })
})
