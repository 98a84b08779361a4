// Refuse oversized request bodies with 413 before they are read whole:
// by Content-Length when it is given, by counting bytes when the body is chunked.
const BODY_METHODS = new Set(['POST', 'PUT', 'PATCH', 'DELETE'])

export default defineEventHandler(async (event) => {
  if (!BODY_METHODS.has(event.method) || !event.path.startsWith('/api/')) return
  const limit = bodyLimitFor(event.path)
  const declared = getRequestHeader(event, 'content-length')
  if (declared !== undefined) {
    if (Number(declared) > limit) throw tooLarge(limit)
    return
  }
  if (!getRequestHeader(event, 'transfer-encoding')) return
  const req = event.node.req
  const chunks: Buffer[] = []
  let size = 0
  await new Promise<void>((resolve, reject) => {
    req.on('data', (chunk: Buffer) => {
      size += chunk.length
      if (size > limit) {
        req.removeAllListeners('data')
        req.resume()
        reject(tooLarge(limit))
        return
      }
      chunks.push(chunk)
    })
    req.on('end', () => resolve())
    // The connection dropped before the body was whole (a tablet losing its network mid-push):
    // nothing was read into anything, and the client sends it again.
    req.on('error', () => reject(badRequest('The request body could not be read to the end; send it again.')))
  })
  // h3's readRawBody takes this instead of reading the (now consumed) stream again.
  ;(req as typeof req & { rawBody?: Buffer }).rawBody = Buffer.concat(chunks)
})
