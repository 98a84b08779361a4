// A JSON object read piece by piece as its text arrives, for the large sync push (up to 8 MiB):
// JSON.parse of the whole body holds the event loop for one long stretch (about 10–20 ms for a
// 2.7 MiB push on our 2 CPUs, plus decoding and destr's checks), and every other request waits
// behind it. Here the text is scanned as each network chunk comes in and the elements of the
// object's arrays are parsed by JSON.parse in batches, so the work is spread over many short turns.
//
// It only ever gives JSON.parse's own answer, or none: the scanner finds where the top-level
// members and the elements of array members begin and end; every value is still parsed by
// JSON.parse, and anything it does not expect (not an object, a bad separator, a member
// after the end…) makes `finish()` answer `undefined`, so the caller falls back to reading the
// whole body the ordinary way (h3's readBody, with its own 400 for bad JSON). Text that h3's
// strict JSON reading (destr) refuses as a possible prototype pollution ("__proto__" or
// "constructor" keys) also answers `undefined`, so h3 refuses it the same way.

// destr 2's own checks (node_modules/destr/dist/index.mjs), run on the same text pieces: a key and
// its colon never straddle two pieces, so a match in the whole body is a match in one of them.
const SUSPECT_PROTO = /"(?:_|\\u0{2}5[Ff]){2}(?:p|\\u0{2}70)(?:r|\\u0{2}72)(?:o|\\u0{2}6[Ff])(?:t|\\u0{2}74)(?:o|\\u0{2}6[Ff])(?:_|\\u0{2}5[Ff]){2}"\s*:/
const SUSPECT_CONSTRUCTOR = /"(?:c|\\u0063)(?:o|\\u006[Ff])(?:n|\\u006[Ee])(?:s|\\u0073)(?:t|\\u0074)(?:r|\\u0072)(?:u|\\u0075)(?:c|\\u0063)(?:t|\\u0074)(?:o|\\u006[Ff])(?:r|\\u0072)"\s*:/

/** Array elements gathered before one JSON.parse (about 1 ms for 250 sync events). */
const BATCH_ELEMENTS = 250
const BATCH_CHARS = 128 * 1024

const QUOTE = 34
const BACKSLASH = 92
const COMMA = 44
const COLON = 58
const OPEN_BRACE = 123
const CLOSE_BRACE = 125
const OPEN_BRACKET = 91
const CLOSE_BRACKET = 93

function isJsonSpace(c: number) {
  return c === 32 || c === 10 || c === 13 || c === 9
}

function suspicious(text: string) {
  return SUSPECT_PROTO.test(text) || SUSPECT_CONSTRUCTOR.test(text)
}

class NotForUs extends Error {}

type Where
  = | 'start' // before the opening brace
    | 'key' // before a member's key (or the closing brace of an empty object)
    | 'colon' // after a key
    | 'value' // before a member's value
    | 'array' // inside an array member, before an element (or its closing bracket)
    | 'element' // inside an element of an array member
    | 'scalar' // inside a member value that is not an array
    | 'after' // after a member's value: a comma or the closing brace
    | 'end' // after the closing brace

export class JsonPieces {
  private where: Where = 'start'
  private failed = false
  private readonly result: Record<string, unknown> = {}
  private key = ''
  private keyText = ''
  private inKey = false
  // The value being scanned (an element or a scalar member): its text so far and its state.
  private text = ''
  private depth = 0
  private inString = false
  private escaped = false
  private elements: unknown[] = []
  private batch: string[] = []
  private batchChars = 0
  private elementCount = 0

  /** Takes the next piece of the body's text. */
  push(chunk: string): void {
    if (this.failed) return
    try {
      this.scan(chunk)
    }
    catch {
      // NotForUs, JSON.parse's SyntaxError, or anything else: the ordinary reading decides.
      this.failed = true
    }
  }

  /** The parsed object, exactly as JSON.parse would give it, or undefined: read the body the ordinary way. */
  finish(): Record<string, unknown> | undefined {
    if (this.failed || this.where !== 'end') return undefined
    return this.result
  }

  private scan(chunk: string) {
    let i = 0
    const n = chunk.length
    while (i < n) {
      const where = this.where
      if (where === 'element' || where === 'scalar') {
        // Scan the value up to the comma or bracket/brace that ends it, outside strings and nesting.
        const start = i
        let inString = this.inString
        let escaped = this.escaped
        let depth = this.depth
        let end = -1
        for (; i < n; i++) {
          const c = chunk.charCodeAt(i)
          if (inString) {
            if (escaped) escaped = false
            else if (c === BACKSLASH) escaped = true
            else if (c === QUOTE) inString = false
            continue
          }
          if (c === QUOTE) inString = true
          else if (c === OPEN_BRACE || c === OPEN_BRACKET) depth++
          else if (c === CLOSE_BRACE || c === CLOSE_BRACKET) {
            if (depth === 0) {
              end = i
              break
            }
            depth--
          }
          else if (c === COMMA && depth === 0) {
            end = i
            break
          }
        }
        this.inString = inString
        this.escaped = escaped
        this.depth = depth
        if (end === -1) {
          this.text += chunk.slice(start, n)
          return
        }
        this.text += chunk.slice(start, end)
        const c = chunk.charCodeAt(end)
        i = end + 1
        if (where === 'element') {
          this.addElement(this.text)
          this.text = ''
          if (c === CLOSE_BRACKET) {
            this.closeArray()
            this.where = 'after'
          }
          else if (c === COMMA) this.where = 'element'
          else throw new NotForUs('a brace closes an array')
        }
        else {
          this.setMember(JSON.parse(this.checked(this.text)))
          this.text = ''
          if (c === CLOSE_BRACE) this.where = 'end'
          else if (c === COMMA) this.where = 'key'
          else throw new NotForUs('a bracket closes the object')
        }
        continue
      }
      if (this.inKey) {
        // Inside a key's string: up to its closing quote.
        let escaped = this.escaped
        const start = i
        let end = -1
        for (; i < n; i++) {
          const c = chunk.charCodeAt(i)
          if (escaped) escaped = false
          else if (c === BACKSLASH) escaped = true
          else if (c === QUOTE) {
            end = i
            break
          }
        }
        this.escaped = escaped
        if (end === -1) {
          this.keyText += chunk.slice(start, n)
          return
        }
        this.keyText += chunk.slice(start, end + 1)
        i = end + 1
        this.inKey = false
        this.key = JSON.parse(this.keyText) as string
        this.where = 'colon'
        continue
      }
      const c = chunk.charCodeAt(i)
      if (isJsonSpace(c)) {
        // Whitespace between tokens; inside a key's run up to its colon it belongs to the key's text.
        if (where === 'colon') this.keyText += chunk[i]
        i++
        continue
      }
      switch (where) {
        case 'start':
          if (c !== OPEN_BRACE) throw new NotForUs('not an object')
          this.where = 'key'
          i++
          break
        case 'key':
          if (c === CLOSE_BRACE && Object.keys(this.result).length === 0 && this.keyText === '') {
            this.where = 'end'
            i++
            break
          }
          if (c !== QUOTE) throw new NotForUs('a key must be a string')
          this.inKey = true
          this.escaped = false
          this.keyText = '"'
          i++
          break
        case 'colon':
          if (c !== COLON) throw new NotForUs('a colon must follow a key')
          this.keyText += ':'
          this.checked(this.keyText)
          this.where = 'value'
          i++
          break
        case 'value':
          if (c === OPEN_BRACKET) {
            this.elements = []
            this.elementCount = 0
            this.where = 'array'
            i++
          }
          else {
            this.startValue()
            this.where = 'scalar'
          }
          break
        case 'array':
          if (c === CLOSE_BRACKET) {
            this.closeArray()
            this.where = 'after'
            i++
          }
          else {
            this.startValue()
            this.where = 'element'
          }
          break
        case 'after':
          if (c === COMMA) this.where = 'key'
          else if (c === CLOSE_BRACE) this.where = 'end'
          else throw new NotForUs('a comma or a closing brace must follow a value')
          i++
          break
        case 'end':
          throw new NotForUs('text after the object')
      }
      // A comma moves on to the next key: forget the last key's text (kept for the check above).
      if (this.where === 'key' && c === COMMA) this.keyText = ''
    }
  }

  private startValue() {
    this.text = ''
    this.depth = 0
    this.inString = false
    this.escaped = false
  }

  private checked(text: string) {
    if (suspicious(text)) throw new NotForUs('refused by destr as a possible prototype pollution')
    return text
  }

  private addElement(text: string) {
    // An empty element ("[1,,2]" or "[1,]") is not JSON: JSON.parse of the batch refuses it.
    this.batch.push(this.checked(text))
    this.batchChars += text.length
    this.elementCount++
    if (this.batch.length >= BATCH_ELEMENTS || this.batchChars >= BATCH_CHARS) this.parseBatch()
  }

  private parseBatch() {
    if (!this.batch.length) return
    const parsed = JSON.parse(`[${this.batch.join(',')}]`) as unknown[]
    if (parsed.length !== this.batch.length) throw new NotForUs('an element held more than one value')
    for (const value of parsed) this.elements.push(value)
    this.batch = []
    this.batchChars = 0
  }

  private closeArray() {
    this.parseBatch()
    this.setMember(this.elements)
    this.elements = []
  }

  private setMember(value: unknown) {
    // As JSON.parse: a repeated key keeps the last value ("__proto__" never gets here).
    this.result[this.key] = value
    this.keyText = ''
  }
}
