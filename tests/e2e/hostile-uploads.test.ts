// Hostile photo uploads (issue 7, item 3), beyond tests/e2e/uploads.test.ts (HTML, text and GIF
// named .jpg, SVG with script, HEIC, 10 MB, a real 20000 × 20000 PNG, damaged files): polyglots that
// are valid images with a payload hidden in them are accepted only as a fresh encoding, so the bytes
// served (and stored) hold none of the payload; headers declaring a pixel flood are refused before
// decoding; SVG in the forms that slip past a first look is refused; names and declared types that
// lie change nothing. Every refusal is a 4xx with a message, stores no row and no file; every photo
// is served as image/jpeg or image/webp with nosniff and a sandboxing CSP.
import { existsSync, readdirSync, readFileSync } from 'node:fs'
import { join } from 'node:path'
import { deflateSync, gzipSync } from 'node:zlib'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import sharp from 'sharp'
import { startServer, type TestServer } from '../support/server'
import type { Client, Reply } from '../support/http'
import { signUp } from '../support/accounts'
import { photoForm, TINY_PNG } from '../support/photos'
import { sql } from '../support/db'
import { badRefusal } from '../support/refusals'
import { jpegDeclaring, jpegWithComment, pngChunk, pngDeclaring, pngWithChunk, storedZip } from '../support/crafted-images'

let server: TestServer
let admin: Client
let organisationId: string

beforeAll(async () => {
  server = await startServer()
  const a = await signUp(server, 'Hostile Photo Org')
  admin = a.client
  organisationId = a.organisationId
}, 120_000)
afterAll(() => server?.stop())

const SCRIPT = '<html><body><script>alert(document.domain)</script></body></html>'
/** Pieces of every payload below; none may be in a stored or served photo. */
const MARKERS = ['<script', 'alert(', 'PK\u0003\u0004', 'Payload.class', 'onload=', '<svg']

const upload = (bytes: Uint8Array, filename: string, type: string) => admin.post('/api/uploads', photoForm(bytes, filename, type))

async function solidJpeg(width = 48, height = 32) {
  return sharp({ create: { width, height, channels: 3, background: { r: 200, g: 120, b: 40 } } }).jpeg({ quality: 90 }).toBuffer()
}

function storedFiles(): string[] {
  const dir = join(server.dir, 'uploads', organisationId)
  return existsSync(dir) ? readdirSync(dir) : []
}

async function rowCount(): Promise<number> {
  return Number((await sql(server.databaseUrl, 'select count(*) as n from uploads where organisation_id = ?', [organisationId])).rows[0]!.n)
}

function expectNoPayload(bytes: Buffer, where: string) {
  const text = bytes.toString('latin1')
  for (const marker of MARKERS) expect(text.includes(marker), `${where} holds ${JSON.stringify(marker)}`).toBe(false)
}

function expectServedAsPhoto(res: Reply) {
  expect(res.status, res.text).toBe(200)
  expect(['image/jpeg', 'image/webp']).toContain(res.headers.get('content-type'))
  expect(res.headers.get('x-content-type-options')).toBe('nosniff')
  expect(res.headers.get('content-security-policy')).toMatch(/default-src 'none'; sandbox/)
}

/** Accepted only as a fresh encoding: what is stored and what is served (both sizes) is a clean photo. */
async function expectCleanPhoto(res: Reply) {
  expect(res.status, res.text).toBe(201)
  for (const url of [res.body.url, res.body.thumbUrl]) {
    const served = await admin.get(url)
    expectServedAsPhoto(served)
    expectNoPayload(served.bytes, `the served ${url}`)
    const meta = await sharp(served.bytes).metadata()
    expect(['jpeg', 'webp']).toContain(meta.format)
    expect(meta.comments ?? []).toEqual([])
  }
  const files = storedFiles().filter(name => name.startsWith(res.body.id))
  expect(files).toHaveLength(2)
  for (const name of files) expectNoPayload(readFileSync(join(server.dir, 'uploads', organisationId, name)), `the stored ${name}`)
}

/** Refused with a 4xx and a readable message; no row and no file left behind. */
async function expectRefused(bytes: Buffer, filename: string, type: string, status: number, message?: RegExp) {
  const rows = await rowCount()
  const files = storedFiles().length
  const res = await upload(bytes, filename, type)
  expect(res.status, res.text).toBe(status)
  expect(badRefusal(res, [415])).toBeNull()
  if (message) expect(res.body.data.message).toMatch(message)
  expect(await rowCount()).toBe(rows)
  expect(storedFiles()).toHaveLength(files)
  return res
}

describe('polyglots: valid photos with a payload inside are stored as a fresh encoding only', () => {
  it('a JPEG with an HTML page and script appended after its end marker', async () => {
    const polyglot = Buffer.concat([await solidJpeg(), Buffer.from(SCRIPT)])
    expect((await sharp(polyglot).metadata()).format).toBe('jpeg')
    await expectCleanPhoto(await upload(polyglot, 'photo.jpg', 'image/jpeg'))
  })

  it('a JPEG with a ZIP archive appended, GIFAR-style (readable as an archive from its end)', async () => {
    const jpeg = await solidJpeg()
    const zip = storedZip('Payload.class', Buffer.from(`\u00CA\u00FE\u00BA\u00BE${SCRIPT}`, 'latin1'), jpeg.length)
    const polyglot = Buffer.concat([jpeg, zip])
    // Both readings hold: a JPEG from the start, an archive from its end record.
    expect(polyglot.readUInt32LE(polyglot.length - 22)).toBe(0x06054B50)
    await expectCleanPhoto(await upload(polyglot, 'holiday.jpg', 'image/jpeg'))
  })

  it('a PNG whose text chunk holds a script, and one with HTML after IEND', async () => {
    const withText = pngWithChunk(TINY_PNG, 'tEXt', Buffer.from(`Comment\u0000${SCRIPT}`, 'latin1'))
    const withXmp = pngWithChunk(TINY_PNG, 'iTXt', Buffer.from(`XML:com.adobe.xmp\u0000\u0000\u0000\u0000\u0000<x:xmpmeta><svg onload=alert(1)/></x:xmpmeta>`, 'latin1'))
    const trailing = Buffer.concat([TINY_PNG, Buffer.from(SCRIPT)])
    for (const png of [withText, withXmp, trailing]) {
      expect((await sharp(png).metadata()).format).toBe('png')
      await expectCleanPhoto(await upload(png, 'label.png', 'image/png'))
    }
  })

  it('a JPEG whose comment segment and EXIF hold markup', async () => {
    const withExif = await sharp(await solidJpeg()).withExif({ IFD0: { ImageDescription: SCRIPT, Artist: '<svg onload=alert(1)>' } }).jpeg().toBuffer()
    const polyglot = jpegWithComment(withExif, SCRIPT)
    expect((await sharp(polyglot).metadata()).format).toBe('jpeg')
    // The payload is in the input twice: the comment segment and the EXIF description.
    expect(polyglot.toString('latin1').split('<script').length - 1).toBe(2)
    await expectCleanPhoto(await upload(polyglot, 'IMG_1.JPG', 'image/jpeg'))
  })

  it('an HTML page that only starts like a JPEG is refused: it cannot be decoded', async () => {
    const fake = Buffer.concat([Buffer.from([0xFF, 0xD8, 0xFF, 0xE0]), Buffer.from(SCRIPT)])
    await expectRefused(fake, 'photo.jpg', 'image/jpeg', 422, /could not be (read|decoded)/)
  })
})

describe('pixel floods are refused from the header, before any pixel is decoded', () => {
  it('a PNG of a few hundred bytes declaring 50,000 × 50,000 pixels', async () => {
    const flood = pngDeclaring(50_000, 50_000)
    expect(flood.length).toBeLessThan(1000)
    await expectRefused(flood, 'tiny.png', 'image/png', 422, /50000 × 50000 pixels; the most we accept is 40 megapixels/)
  })

  it('a PNG within the side limit but over 40 megapixels (12,000 × 3,500)', async () => {
    await expectRefused(pngDeclaring(12_000, 3_500), 'wide.png', 'image/png', 422, /12000 × 3500 pixels/)
  })

  it('a JPEG whose frame header says 65,500 × 65,500', async () => {
    const flood = jpegDeclaring(await solidJpeg(), 65_500, 65_500)
    expect((await sharp(flood, { limitInputPixels: false }).metadata()).width).toBe(65_500)
    await expectRefused(flood, 'flood.jpg', 'image/jpeg', 422, /65500 × 65500 pixels/)
  })

  it('a PNG that claims to be 1 × 1 but carries a deflate bomb is refused as damaged, not decoded forever', async () => {
    // 50 MB of zeros deflate to about 50 KB; the decoder stops at the one row the header allows.
    const ihdr = Buffer.alloc(13)
    ihdr.writeUInt32BE(1, 0)
    ihdr.writeUInt32BE(1, 4)
    ihdr.set([8, 2, 0, 0, 0], 8)
    const bomb = Buffer.concat([TINY_PNG.subarray(0, 8), pngChunk('IHDR', ihdr), pngChunk('IDAT', deflateSync(Buffer.alloc(50_000_000))), pngChunk('IEND', Buffer.alloc(0))])
    expect(bomb.length).toBeLessThan(200_000)
    const rows = await rowCount()
    const res = await upload(bomb, 'bomb.png', 'image/png')
    // Either decoded as the one pixel it says it has (and re-encoded) or refused as damaged; never a 5xx.
    expect(badRefusal(res, [415])).toBeNull()
    if (res.status === 201) {
      expect([res.body.width, res.body.height]).toEqual([1, 1])
      await expectCleanPhoto(res)
    }
    else {
      expect(res.status).toBe(422)
      expect(await rowCount()).toBe(rows)
    }
    expect((await admin.get('/api/health')).status).toBe(200)
  })
})

describe('SVG in the forms that slip past a first look is refused', () => {
  const svg = '<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10" onload="alert(1)"><script>alert(2)</script></svg>'

  it('with a byte-order mark, a doctype and an entity (XXE)', async () => {
    const xxe = `\uFEFF<?xml version="1.0"?>\n<!DOCTYPE svg [<!ENTITY x SYSTEM "file:///etc/passwd">]>\n${svg.replace('</svg>', '<text>&x;</text></svg>')}`
    await expectRefused(Buffer.from(xxe), 'drawing.png', 'image/png', 415, /SVG drawings are not accepted/)
  })

  it('with its first tag after a 5,000-byte comment, past where the SVG check looks', async () => {
    const late = `<?xml version="1.0"?><!--${'x'.repeat(5000)}-->${svg}`
    await expectRefused(Buffer.from(late), 'drawing.jpg', 'image/jpeg', 415, /not a photo|SVG/)
  })

  it('gzipped (SVGZ), and written in UTF-16', async () => {
    await expectRefused(gzipSync(Buffer.from(svg)), 'drawing.svgz', 'image/svg+xml', 415, /GZ file|not a photo/)
    await expectRefused(Buffer.concat([Buffer.from([0xFF, 0xFE]), Buffer.from(svg, 'utf16le')]), 'drawing.svg', 'image/svg+xml', 415, /not a photo|SVG/)
  })

  it('an HTML page holding inline SVG, named .png and sent as image/png', async () => {
    await expectRefused(Buffer.from(`<!doctype html><html><body>${svg}</body></html>`), 'photo.png', 'image/png', 415, /not a photo, whatever its name says/)
  })
})

describe('names and declared types that lie', () => {
  it('PNG bytes named .jpg and sent as image/jpeg are read as the PNG they are, and served as a JPEG', async () => {
    const res = await upload(TINY_PNG, 'photo.jpg', 'image/jpeg')
    expect(res.status, res.text).toBe(201)
    const audit = (await admin.get('/api/audit')).body as Array<{ targetId: string, detail: { received?: string } }>
    expect(audit.find(e => e.targetId === res.body.id)?.detail.received).toBe('image/png')
    expectServedAsPhoto(await admin.get(res.body.url))
  })

  it('a JPEG sent as text/html with an HTML name is served as image/jpeg, never as HTML', async () => {
    const res = await upload(await solidJpeg(), 'index.html', 'text/html')
    expect(res.status, res.text).toBe(201)
    const served = await admin.get(res.body.url)
    expectServedAsPhoto(served)
    expect(served.headers.get('content-type')).toBe('image/jpeg')
  })

  it('a file name with a path, a NUL and a header break is not where or how the photo is stored', async () => {
    for (const name of ['../../../../tmp/evil.jpg', 'a.jpg\u0000.html', 'a.jpg"\r\nContent-Type: text/html\r\n\r\n<script>']) {
      const res = await upload(await solidJpeg(), name, 'image/jpeg')
      expect(res.status, res.text).toBe(201)
      expect(storedFiles().filter(f => f.startsWith(res.body.id)).sort()).toEqual([`${res.body.id}.jpg`, `${res.body.id}.thumb.jpg`])
      expectServedAsPhoto(await admin.get(res.body.url))
    }
    expect(existsSync('/tmp/evil.jpg')).toBe(false)
  })

  it('formats we do not take are refused whatever they are called: TIFF, BMP, ICO, PDF', async () => {
    const tiny = sharp({ create: { width: 4, height: 4, channels: 3, background: { r: 1, g: 2, b: 3 } } })
    await expectRefused(await tiny.clone().tiff().toBuffer(), 'scan.jpg', 'image/jpeg', 415, /TIF file, whatever its name says/)
    const bmp = Buffer.concat([Buffer.from('BM'), Buffer.alloc(52)])
    await expectRefused(bmp, 'paint.png', 'image/png', 415, /whatever its name says/)
    await expectRefused(Buffer.from([0, 0, 1, 0, 1, 0, 16, 16, 0, 0, 1, 0, 32, 0, 0, 0, 0, 0, 22, 0, 0, 0]), 'favicon.png', 'image/png', 415, /whatever its name says/)
    await expectRefused(Buffer.from(`%PDF-1.4\n1 0 obj << /OpenAction << /S /JavaScript /JS (app.alert(1)) >> >> endobj\n%%EOF`), 'doc.jpg', 'image/jpeg', 415, /PDF file, whatever its name says/)
  })
})
