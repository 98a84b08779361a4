// POST /api/sync: the push (up to 8 MiB of JSON) is parsed while it arrives, a network chunk at a
// time (server/utils/json-pieces.ts), instead of decoded and parsed in one piece once it is all in:
// that one piece held the event loop for 10–20 ms and every request waited behind it. h3's
// readBody then finds the parsed body (readValid works as on any route). Whatever JsonPieces does
// not answer for (bad JSON, another content type, a suspicious key) is left to the ordinary
// reading, with the same raw bytes. Runs after body-limit.ts, which has already refused an
// oversized body (and read a chunked one whole).
import { StringDecoder } from 'node:string_decoder'
import type { IncomingMessage } from 'node:http'

const PARSED_BODY = Symbol.for('h3ParsedBody')
/** Slices of an already-read body parsed between two turns of the event loop. */
const SLICE_BYTES = 64 * 1024

type BodyRequest = IncomingMessage & { rawBody?: Buffer, [PARSED_BODY]?: unknown }

export default defineEventHandler(async (event) => {
  if (event.method !== 'POST' || event.path.split('?')[0] !== '/api/sync') return
  // h3 reads application/json strictly (destr); other types it reads its own ways.
  if (getRequestHeader(event, 'content-type') !== 'application/json') return
  const req = event.node.req as BodyRequest
  const reader = new JsonPieces()
  const decoder = new StringDecoder('utf8')
  let chunks: Buffer[]
  if (req.rawBody) {
    // A chunked body body-limit.ts has read whole: parsed in slices, yielding between them.
    chunks = [req.rawBody]
    for (let at = 0; at < req.rawBody.length; at += SLICE_BYTES) {
      if (at > 0) await new Promise<void>(resolve => setImmediate(resolve))
      reader.push(decoder.write(req.rawBody.subarray(at, at + SLICE_BYTES)))
    }
  }
  else {
    if (!Number.parseInt(getRequestHeader(event, 'content-length') ?? '')) return
    chunks = []
    const read = await new Promise<boolean>((resolve) => {
      // One chunk per turn of the event loop: when the loop was busy, the socket hands over
      // everything that arrived meanwhile in one go (libuv reads up to 32 × 64 KiB per wake-up),
      // and scanning a whole 2.7 MiB push at once held the loop for 40–60 ms. Pausing the request
      // stops the socket reading; the next chunk waits for the next turn, after other requests.
      req.on('data', (chunk: Buffer) => {
        chunks.push(chunk)
        req.pause()
        setImmediate(() => {
          reader.push(decoder.write(chunk))
          req.resume()
        })
      })
      req.on('end', () => setImmediate(() => resolve(true)))
      req.on('error', () => resolve(false))
    })
    if (!read) throw badRequest('The request body could not be read to the end; send the push again.')
  }
  reader.push(decoder.end())
  const parsed = reader.finish()
  if (parsed) req[PARSED_BODY] = parsed
  // h3's readRawBody takes this instead of reading the (now consumed) stream again.
  else req.rawBody = chunks.length === 1 ? chunks[0] : Buffer.concat(chunks)
})
