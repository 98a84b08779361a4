// fast-check arbitraries generated from the shape of a zod 4 schema, for fuzzing routes.
// zod-fast-check (the known package) supports zod 3 and fast-check 3 only (peer deps zod ^3.18,
// fast-check <4); this project runs zod 4 and fast-check 4, so this is a small walker of zod 4's
// `_zod.def` instead. It makes two kinds of values:
// - `validish(schema)`: values of the schema's shape that mostly pass it (lengths, ranges, formats,
//   enums, literals), with ids drawn from the ids the test knows (its own organisation's and other
//   organisations') as well as random ones;
// - `hostile(schema)`: the same shape with some nodes replaced by junk (wrong types, numbers at the
//   edges, huge and odd strings, nested junk), keys dropped or added, and now and then no shape
//   at all: any JSON value, or text that is not JSON.
import fc from 'fast-check'
import type { z } from 'zod'

export interface WalkOptions {
  /** Known ids mixed into every uuid field: the caller's own rows and other organisations' rows. */
  ids?: readonly string[]
  /** Known addresses mixed into every e-mail field (existing accounts → 409). */
  emails?: readonly string[]
  /** Values for fields by key name, where the schema's shape says too little (a refine on a date). */
  hints?: Record<string, fc.Arbitrary<unknown>>
  /** In hostile mode a node stays valid validWeight times for every junkWeight times it is junk (default 5 to 1). */
  validWeight?: number
  junkWeight?: number
  /** Longest array generated where the schema allows more (default 3); over-limit arrays come on top. */
  maxArray?: number
  /** hostile(): how many wholly valid-ish values for every 6 broken ones (default 2). Lower it where a valid body is costly (a password hash). */
  validishWeight?: number
}

/** A body sent as raw text (not JSON.stringify'd): broken JSON and the like. */
export class RawBody {
  constructor(readonly text: string) {}
  toString() {
    return `RawBody(${JSON.stringify(this.text.slice(0, 120))}${this.text.length > 120 ? '…' : ''})`
  }
}

/** Keys a client has no business setting; a route must ignore or refuse them (mass assignment). */
export const PRIVILEGED_KEYS = ['organisationId', 'organisation_id', 'role', 'userId', 'user_id', 'createdAt', 'updatedAt', 'publishedAt', 'id', 'revision', 'passwordHash', 'createdBy', 'archivedAt', 'status'] as const

const pollutedJson = [
  '{"__proto__": {"role": "admin", "isAdmin": true}}',
  '{"constructor": {"prototype": {"role": "admin"}}}',
]

/** Strings that have broken servers before: control characters, header injection, markup, lone surrogates, long runs. */
const nastyStrings = fc.constantFrom(
  '', ' ', '\t', '\u0000', 'a\u0000b', '\r\n', 'name\r\nBcc: intruder@elsewhere.example', 'name%0d%0aBcc:%20intruder@elsewhere.example',
  'x\nSubject: forged', '<script>alert(1)</script>', '"><img src=x onerror=alert(1)>', '\'; drop table users; --', '../../../etc/passwd',
  '=HYPERLINK("http://elsewhere.example")', '\ud800', 'a\udfffb', '\u202eevil\u202c', '\ufeffbom', '\u2028\u2029', 'e\u0301\u0301\u0301',
  '👩‍👩‍👧‍👦', 'ﷺ', 'Ǆǅǆ', '0', '-1', '1e309', 'NaN', 'null', 'true', 'undefined', '[object Object]', '__proto__', 'constructor',
  '00000000-0000-0000-0000-000000000000', 'ffffffff-ffff-ffff-ffff-ffffffffffff', '8D2F6A38-4B7E-4C55-9B0E-2F1B8C1D9E00',
  'x'.repeat(1000), 'é'.repeat(5000), '𝕏'.repeat(3000),
)

/** Numbers at the edges of what JSON and JavaScript carry. */
const edgeNumbers = fc.constantFrom(0, -0, 1, -1, 0.5, -0.5, 2 ** 31, -(2 ** 31), 2 ** 32, 2 ** 53, -(2 ** 53), 2 ** 53 + 2, 1e21, 1e308, -1e308, 5e-324, 8_640_000_000_000_001)

function nested(depth: number, leaf: unknown): unknown {
  let value = leaf
  for (let i = 0; i < depth; i++) value = i % 2 ? { a: value } : [value]
  return value
}

/** Anything at all, of any type, the way a broken or hostile client might send it. */
export const junk: fc.Arbitrary<unknown> = fc.oneof(
  { weight: 2, arbitrary: fc.constantFrom<unknown>(null, true, false, [], {}, [null], { '': '' }) },
  { weight: 3, arbitrary: edgeNumbers },
  { weight: 1, arbitrary: fc.double({ noNaN: true, noDefaultInfinity: true }) },
  { weight: 1, arbitrary: fc.integer() },
  { weight: 4, arbitrary: nastyStrings },
  { weight: 2, arbitrary: fc.string({ unit: 'binary', maxLength: 40 }) },
  { weight: 1, arbitrary: fc.string({ unit: 'grapheme', maxLength: 40 }) },
  { weight: 1, arbitrary: fc.integer({ min: 10_000, max: 70_000 }).map(n => 'ü'.repeat(n)) },
  { weight: 2, arbitrary: fc.jsonValue({ maxDepth: 3 }) },
  { weight: 1, arbitrary: fc.constantFrom(...pollutedJson).map(text => JSON.parse(text) as unknown) },
  { weight: 1, arbitrary: fc.integer({ min: 20, max: 2000 }).map(n => nested(n, 'deep')) },
)

/** Text that is not a JSON object: cut off, doubled, other encodings, empty. */
const rawText = fc.oneof(
  fc.constantFrom('', ' ', '{', '{"a":', '}{', '{"a":1}{"b":2}', 'nul', 'undefined', '\ufeff{}', '{\'a\': 1}', '{"a":1,}', '[1,2', '"\\ud800"', 'NaN', '1e999', '\u0000'),
  fc.string({ unit: 'binary', maxLength: 60 }),
  fc.jsonValue().map(v => JSON.stringify(v).slice(0, -1)),
).map(text => new RawBody(text))

type Def = Record<string, any> & { type: string }
const defOf = (schema: z.ZodType): Def => (schema as unknown as { _zod: { def: Def } })._zod.def
const checksOf = (def: Def): Array<Record<string, any>> => (def.checks ?? []).map((c: { _zod: { def: Record<string, any> } }) => c._zod.def)
const mayBeLeftOut = (schema: z.ZodType) => (schema as unknown as { _zod: { optin?: string } })._zod.optin === 'optional'

interface Bounds { min?: number, max?: number, int: boolean, minExclusive: boolean, maxExclusive: boolean }

function numberBounds(def: Def): Bounds {
  const bounds: Bounds = { int: false, minExclusive: false, maxExclusive: false }
  for (const c of checksOf(def)) {
    if (c.check === 'number_format') bounds.int = /int/.test(String(c.format))
    if (c.check === 'greater_than') Object.assign(bounds, { min: c.value, minExclusive: !c.inclusive })
    if (c.check === 'less_than') Object.assign(bounds, { max: c.value, maxExclusive: !c.inclusive })
  }
  return bounds
}

function lengthBounds(def: Def) {
  let min = 0
  let max: number | undefined
  for (const c of checksOf(def)) {
    if (c.check === 'min_length') min = c.minimum
    if (c.check === 'max_length') max = c.maximum
    if (c.check === 'length_equals') min = max = c.length
  }
  return { min, max }
}

class Walker {
  private readonly ids: readonly string[]
  private readonly emails: readonly string[]
  private readonly hints: Record<string, fc.Arbitrary<unknown>>
  private readonly validWeight: number
  private readonly junkWeight: number
  private readonly maxArray: number

  constructor(private readonly options: WalkOptions, private readonly hostile: boolean) {
    this.ids = options.ids ?? []
    this.emails = options.emails ?? []
    this.hints = options.hints ?? {}
    this.validWeight = options.validWeight ?? 5
    this.junkWeight = options.junkWeight ?? 1
    this.maxArray = options.maxArray ?? 3
  }

  /** A node: in hostile mode sometimes junk instead of the shape. */
  node(schema: z.ZodType, key?: string): fc.Arbitrary<unknown> {
    const shaped = key !== undefined && this.hints[key] ? this.hints[key]! : this.shape(schema)
    return this.hostile ? fc.oneof({ weight: this.validWeight, arbitrary: shaped }, { weight: this.junkWeight, arbitrary: junk }) : shaped
  }

  private uuid(): fc.Arbitrary<string> {
    return this.ids.length ? fc.oneof(fc.uuid({ version: 4 }), fc.constantFrom(...this.ids)) : fc.uuid({ version: 4 })
  }

  private string(def: Def): fc.Arbitrary<unknown> {
    switch (def.format) {
      case 'uuid': case 'guid': return this.uuid()
      case 'email': {
        // The schema's own pattern makes addresses it takes; fc.emailAddress() (RFC 5322) makes many it refuses.
        const own = def.pattern instanceof RegExp ? [{ weight: 3, arbitrary: fc.stringMatching(new RegExp(def.pattern.source)).filter(s => s.length <= 254) }] : []
        const known = this.emails.length ? [{ weight: 1, arbitrary: fc.constantFrom(...this.emails) }] : []
        return fc.oneof(...own, { weight: 1, arbitrary: fc.emailAddress() }, ...known)
      }
      case 'datetime': return fc.date({ min: new Date('1970-01-01T00:00:00Z'), max: new Date('2100-01-01T00:00:00Z'), noInvalidDate: true }).map(d => d.toISOString())
      case 'date': return fc.date({ min: new Date('1970-01-01T00:00:00Z'), max: new Date('2100-01-01T00:00:00Z'), noInvalidDate: true }).map(d => d.toISOString().slice(0, 10))
      default: break
    }
    const regex = checksOf(def).find(c => c.check === 'string_format' && c.pattern instanceof RegExp)?.pattern as RegExp | undefined
    // stringMatching takes no flags; without `i` it still makes strings the pattern matches.
    if (regex) return fc.stringMatching(new RegExp(regex.source)).filter(s => s.length <= 2000)
    const { min, max } = lengthBounds(def)
    const upper = Math.min(max ?? min + 40, min + 40)
    const lengths = { minLength: min, maxLength: Math.max(min, upper) }
    const shaped = fc.oneof(
      { weight: 4, arbitrary: fc.string({ ...lengths, unit: 'grapheme-ascii' }) },
      { weight: 2, arbitrary: fc.string({ ...lengths, unit: 'grapheme' }) },
      // Any code point, lone surrogates and control characters too: hostile mode only.
      ...(this.hostile ? [{ weight: 1, arbitrary: fc.string({ ...lengths, unit: 'binary' }) }] : []),
    )
    // Exactly at the limit; in hostile mode one past it too.
    const edges = max === undefined ? [] : [fc.constant('y'.repeat(max)), ...(this.hostile ? [fc.constant('y'.repeat(max + 1))] : [])]
    return edges.length ? fc.oneof({ weight: 6, arbitrary: shaped }, ...edges) : shaped
  }

  private number(def: Def): fc.Arbitrary<unknown> {
    const b = numberBounds(def)
    const min = b.min === undefined ? -1_000_000 : b.min + (b.minExclusive ? (b.int ? 1 : 1e-9) : 0)
    const max = b.max === undefined ? 1_000_000 : b.max - (b.maxExclusive ? (b.int ? 1 : 1e-9) : 0)
    const inside = b.int
      ? fc.integer({ min: Math.max(min, Number.MIN_SAFE_INTEGER), max: Math.min(max, Number.MAX_SAFE_INTEGER) })
      : fc.double({ min, max, noNaN: true, noDefaultInfinity: true })
    // At the limits; in hostile mode just past them too.
    const edges = [b.min, b.max].filter((v): v is number => v !== undefined).flatMap(v => this.hostile ? [v, v - 1, v + 1] : [v])
      .filter(v => this.hostile || (v >= min && v <= max))
    const coerced = def.coerce ? [inside.map(n => String(n))] : []
    return fc.oneof({ weight: 6, arbitrary: inside }, ...(edges.length ? [fc.constantFrom(...edges)] : []), ...coerced)
  }

  private array(def: Def): fc.Arbitrary<unknown> {
    const { min, max } = lengthBounds(def)
    const element = this.node(def.element)
    const shaped = fc.array(element, { minLength: min, maxLength: Math.max(min, Math.min(max ?? this.maxArray, this.maxArray)) })
    // Hostile mode: one past the limit, cheaply (the same element repeated, also a duplicate-id case), and empty.
    // The repeated element is valid-ish, so limits do not multiply down nested lists (501 checks × 501 elements × junk).
    const over = this.hostile && max !== undefined && max < 5000 ? [new Walker(this.options, false).shape(def.element).map(e => Array.from({ length: max + 1 }, () => e))] : []
    const under = this.hostile && min > 0 ? [fc.constant([])] : []
    return over.length || under.length ? fc.oneof({ weight: 8, arbitrary: shaped }, ...over, ...under) : shaped
  }

  private object(def: Def): fc.Arbitrary<unknown> {
    const entries = Object.entries(def.shape as Record<string, z.ZodType>)
    const fields = entries.map(([key, schema]) => {
      const value = this.node(schema, key)
      return mayBeLeftOut(schema) ? fc.option(value, { nil: undefined, freq: 3 }) : value
    })
    const built = fc.tuple(...fields).map((values) => {
      const out: Record<string, unknown> = {}
      entries.forEach(([key], i) => {
        if (values[i] !== undefined) out[key] = values[i]
      })
      return out
    })
    if (!this.hostile) return built
    const extraKey = fc.oneof(fc.constantFrom(...PRIVILEGED_KEYS), fc.string({ maxLength: 12 }))
    // A key left out one time in six, extra keys one time in three.
    const drop = fc.oneof({ weight: 5, arbitrary: fc.constant(null) }, { weight: 1, arbitrary: fc.nat(Math.max(0, entries.length - 1)) })
    const extra = fc.oneof({ weight: 2, arbitrary: fc.constant(null) }, { weight: 1, arbitrary: fc.dictionary(extraKey, junk, { minKeys: 1, maxKeys: 3 }) })
    return fc.tuple(built, drop, extra)
      .map(([obj, drop, extra]) => {
        const dropped = drop !== null ? entries[drop]?.[0] : undefined
        const out = Object.fromEntries(Object.entries(obj).filter(([key]) => key !== dropped))
        return extra ? Object.assign(out, extra) : out
      })
  }

  private record(def: Def): fc.Arbitrary<unknown> {
    const key = this.shape(def.keyType).filter((k): k is string => typeof k === 'string')
    return fc.dictionary(key, this.node(def.valueType), { maxKeys: this.maxArray })
  }

  /** The schema's own shape, children in the same mode. */
  shape(schema: z.ZodType): fc.Arbitrary<unknown> {
    const def = defOf(schema)
    switch (def.type) {
      case 'string': return this.string(def)
      case 'number': case 'int': return this.number(def)
      case 'boolean': return fc.boolean()
      case 'null': return fc.constant(null)
      case 'literal': return fc.constantFrom(...(def.values as unknown[]))
      case 'enum': return fc.constantFrom(...Object.values(def.entries as Record<string, unknown>))
      case 'array': return this.array(def)
      case 'object': return this.object(def)
      case 'record': return this.record(def)
      case 'union': return fc.oneof(...(def.options as z.ZodType[]).map(o => this.shape(o)))
      case 'nullable': return fc.oneof({ weight: 4, arbitrary: this.shape(def.innerType) }, { weight: 1, arbitrary: fc.constant(null) })
      case 'optional': case 'default': case 'prefault': case 'readonly': case 'catch': case 'nonoptional':
        return this.shape(def.innerType)
      // A pipe's input is what a client sends: a transform on the way out (lower-casing) leaves the
      // input's shape; a preprocess or a format piped after a trim takes the later, stricter shape.
      case 'pipe': return defOf(def.out).type === 'transform' ? this.shape(def.in) : this.shape(def.out)
      case 'lazy': return this.shape(def.getter())
      default: return junk
    }
  }
}

/** Values of the schema's shape that mostly pass it. */
export function validish(schema: z.ZodType, options: WalkOptions = {}): fc.Arbitrary<unknown> {
  return new Walker(options, false).shape(schema)
}

/** The schema's shape broken here and there, plus now and then anything at all or text that is not JSON. */
export function hostile(schema: z.ZodType, options: WalkOptions = {}): fc.Arbitrary<unknown> {
  const mix = [
    { weight: options.validishWeight ?? 2, arbitrary: validish(schema, options) },
    { weight: 6, arbitrary: new Walker(options, true).shape(schema) },
    { weight: 1, arbitrary: junk },
    { weight: 1, arbitrary: rawText as fc.Arbitrary<unknown> },
  ]
  return fc.oneof(...mix.filter(m => m.weight > 0))
}
