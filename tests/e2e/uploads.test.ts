// Photo uploads over HTTP: real JPEG and PNG files are re-encoded, resized, oriented and stripped of
// metadata; forged types, SVG, oversized files and decompression bombs are refused with a message;
// only coaches and admins upload, and only members of the owning organisation can read a photo.
import { existsSync, readdirSync } from 'node:fs'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import sharp from 'sharp'
import ExifReader from 'exifreader'
import { startServer, type TestServer } from '../support/server'
import { Client, uniqueAddress, type Reply } from '../support/http'
import { addMember, signUp } from '../support/accounts'
import { photoForm, TINY_PNG } from '../support/photos'
import { sql } from '../support/db'

let server: TestServer
let a: Awaited<ReturnType<typeof signUp>>
let b: Awaited<ReturnType<typeof signUp>>
let coach: Client
let learner: Client
let auditor: Client

beforeAll(async () => {
  server = await startServer()
  a = await signUp(server, 'Photo Org A')
  b = await signUp(server, 'Photo Org B')
  coach = (await addMember(server, a.client, 'coach')).client
  learner = (await addMember(server, a.client, 'learner')).client
  auditor = (await addMember(server, a.client, 'auditor')).client
}, 120_000)
afterAll(() => server?.stop())

const CACHE = 'private, max-age=31536000, immutable'
const upload = (client: Client, bytes: Uint8Array, filename: string, type: string) => client.post('/api/uploads', photoForm(bytes, filename, type))

/** EXIF tags ExifReader finds in a file; an empty list when there are none (the 'file' group is not EXIF). */
function exifGroups(bytes: Uint8Array): string[] {
  const tags = ExifReader.load(Buffer.from(bytes), { expanded: true }) as Record<string, unknown>
  return Object.keys(tags).filter(group => group !== 'file' && group !== 'Thumbnail' ? Object.keys(tags[group] as object).length > 0 : false)
}

async function uploadCount(organisationId: string): Promise<number> {
  const result = await sql(server.databaseUrl, 'select count(*) as n from uploads where organisation_id = ?', [organisationId])
  return Number(result.rows[0]!.n)
}

function storedFiles(organisationId: string): string[] {
  const dir = join(server.dir, 'uploads', organisationId)
  return existsSync(dir) ? readdirSync(dir) : []
}

/** Mean colour of a region, to tell which way a two-colour photo was turned. */
async function meanOf(bytes: Buffer, region: { left: number, top: number, width: number, height: number }) {
  // stats() describes its input, not the pipeline's output, so cut the region out first.
  const { channels } = await sharp(await sharp(bytes).extract(region).png().toBuffer()).stats()
  return { r: channels[0]!.mean, g: channels[1]!.mean, b: channels[2]!.mean }
}

async function expectServedPhoto(res: Reply, mime: string) {
  expect(res.status, res.text).toBe(200)
  expect(res.headers.get('content-type')).toBe(mime)
  expect(res.headers.get('cache-control')).toBe(CACHE)
  expect(res.headers.get('x-content-type-options')).toBe('nosniff')
  return sharp(res.bytes).metadata()
}

describe('accepted photos', () => {
  it('re-encodes a camera JPEG: applies its orientation, fits it in 2048 px, drops EXIF and GPS, makes a 400 px thumbnail', async () => {
    // 4000 × 3000, left half red and right half blue, stored sideways (EXIF Orientation 6 = turn 90° clockwise
    // to display, TIFF 6.0 / Exif 2.32 §4.6.4), with a camera make and a GPS position.
    const input = await sharp({ create: { width: 4000, height: 3000, channels: 3, background: { r: 220, g: 30, b: 30 } } })
      .composite([{ input: { create: { width: 2000, height: 3000, channels: 3, background: { r: 30, g: 30, b: 220 } } }, left: 2000, top: 0 }])
      .jpeg({ quality: 90 })
      .withExif({
        IFD0: { Make: 'Hollowmere Cam', Model: 'Line Tablet 2' },
        IFD3: { GPSLatitudeRef: 'N', GPSLatitude: '51/1 30/1 1234/100', GPSLongitudeRef: 'W', GPSLongitude: '0/1 7/1 3900/100' },
      })
      .withMetadata({ orientation: 6 })
      .toBuffer()
    // The input really carries what must be removed.
    const before = ExifReader.load(input, { expanded: true })
    expect(before.gps?.Latitude).toBeCloseTo(51.5034, 3)
    expect(before.gps?.Longitude).toBeCloseTo(-0.1275, 3)
    expect(before.exif?.Make?.description).toBe('Hollowmere Cam')
    expect(before.exif?.Orientation?.value).toBe(6)

    const res = await upload(coach, input, 'IMG_0001.JPG', 'image/jpeg')
    expect(res.status, res.text).toBe(201)
    const { id } = res.body
    expect(res.body).toEqual({ id, url: `/api/uploads/${id}`, thumbUrl: `/api/uploads/${id}?size=thumb`, width: 1536, height: 2048 })

    const full = await coach.get(res.body.url)
    const fullMeta = await expectServedPhoto(full, 'image/jpeg')
    expect(fullMeta.format).toBe('jpeg')
    expect([fullMeta.width, fullMeta.height]).toEqual([1536, 2048])
    expect(fullMeta.orientation).toBeUndefined()
    expect(fullMeta.exif).toBeUndefined()
    expect(fullMeta.xmp).toBeUndefined()
    expect(exifGroups(full.bytes)).toEqual([])
    // Turned upright: the left (red) half of the stored pixels is now the top.
    const top = await meanOf(full.bytes, { left: 0, top: 0, width: 1536, height: 900 })
    const bottom = await meanOf(full.bytes, { left: 0, top: 1148, width: 1536, height: 900 })
    expect(top.r).toBeGreaterThan(top.b + 100)
    expect(bottom.b).toBeGreaterThan(bottom.r + 100)

    const thumb = await coach.get(res.body.thumbUrl)
    const thumbMeta = await expectServedPhoto(thumb, 'image/jpeg')
    expect([thumbMeta.width, thumbMeta.height]).toEqual([300, 400])
    expect(thumbMeta.exif).toBeUndefined()
    expect(exifGroups(thumb.bytes)).toEqual([])
    expect(thumb.bytes.byteLength).toBeLessThan(full.bytes.byteLength)

    // Stored under UPLOAD_DIR (set when the server started), in the organisation's folder.
    expect(storedFiles(a.organisationId).sort()).toEqual(expect.arrayContaining([`${id}.jpg`, `${id}.thumb.jpg`]))
  })

  it('re-encodes a PNG as JPEG, fitted within 2048 px, with a thumbnail of at most 400 px', async () => {
    const input = await sharp({ create: { width: 3000, height: 1000, channels: 3, background: { r: 40, g: 140, b: 90 } } }).png().toBuffer()
    expect((await sharp(input).metadata()).format).toBe('png')
    const res = await upload(a.client, input, 'screen.png', 'image/png')
    expect(res.status, res.text).toBe(201)
    expect(res.body.width).toBe(2048)
    expect(Math.abs(res.body.height - 2048 / 3)).toBeLessThanOrEqual(1)

    const fullMeta = await expectServedPhoto(await a.client.get(res.body.url), 'image/jpeg')
    expect([fullMeta.format, fullMeta.width, fullMeta.height]).toEqual(['jpeg', res.body.width, res.body.height])
    const thumbMeta = await expectServedPhoto(await a.client.get(res.body.thumbUrl), 'image/jpeg')
    expect(thumbMeta.width).toBe(400)
    expect(thumbMeta.height).toBeLessThanOrEqual(400)
  })

  it('keeps transparency as WebP and never enlarges a small photo', async () => {
    const input = await sharp({ create: { width: 600, height: 400, channels: 4, background: { r: 10, g: 20, b: 30, alpha: 0.5 } } }).png().toBuffer()
    const res = await upload(coach, input, 'label.png', 'image/png')
    expect(res.status, res.text).toBe(201)
    expect([res.body.width, res.body.height]).toEqual([600, 400])
    const fullMeta = await expectServedPhoto(await coach.get(res.body.url), 'image/webp')
    expect([fullMeta.format, fullMeta.width, fullMeta.height, fullMeta.hasAlpha]).toEqual(['webp', 600, 400, true])
    const thumbMeta = await expectServedPhoto(await coach.get(res.body.thumbUrl), 'image/webp')
    expect([thumbMeta.width, thumbMeta.height]).toEqual([400, 267])

    const tiny = await upload(coach, TINY_PNG, 'tiny.png', 'image/png')
    expect([tiny.body.width, tiny.body.height]).toEqual([8, 6])
  })

  it('judges by content, not by name or declared type: a PNG named .txt is still a photo', async () => {
    const res = await upload(coach, TINY_PNG, 'notes.txt', 'text/plain')
    expect(res.status, res.text).toBe(201)
    expect((await coach.get(res.body.url)).headers.get('content-type')).toBe('image/jpeg')
  })

  it('records the upload in the audit log', async () => {
    const res = await upload(coach, TINY_PNG, 'audit.png', 'image/png')
    const audit = (await a.client.get('/api/audit')).body as Array<{ action: string, targetId: string, detail: Record<string, unknown> }>
    const entry = audit.find(e => e.targetId === res.body.id)
    expect(entry?.action).toBe('upload.created')
    expect(entry?.detail).toMatchObject({ received: 'image/png', stored: 'image/jpeg', width: 8, height: 6 })
  })
})

describe('refused files', () => {
  it('refuses an HTML file named photo.jpg sent as image/jpeg, and stores nothing', async () => {
    const rows = await uploadCount(a.organisationId)
    const files = storedFiles(a.organisationId).length
    const html = Buffer.from('<!doctype html><html><body><script>alert(document.cookie)</script></body></html>')
    const res = await upload(coach, html, 'photo.jpg', 'image/jpeg')
    expect(res.status).toBe(415)
    expect(res.body.message).toBe('That file is not a photo, whatever its name says. Send a photo (JPEG, PNG or WebP); SVG drawings are not accepted.')
    const text = await upload(coach, Buffer.from('just some words, not a photo'), 'IMG_2.jpeg', 'image/jpeg')
    expect(text.status).toBe(415)
    const gif = await upload(coach, await sharp(TINY_PNG).gif().toBuffer(), 'anim.jpg', 'image/jpeg')
    expect(gif.status).toBe(415)
    expect(gif.body.message).toMatch(/That file is a GIF file/)
    expect(await uploadCount(a.organisationId)).toBe(rows)
    expect(storedFiles(a.organisationId)).toHaveLength(files)
  })

  it('refuses SVG drawings, however they are named, with a message saying so', async () => {
    const svg = '<?xml version="1.0" encoding="UTF-8"?>\n<!-- drawn by hand -->\n<svg xmlns="http://www.w3.org/2000/svg" width="10" height="10"><script>alert(1)</script><rect width="10" height="10"/></svg>'
    for (const [name, type] of [['drawing.svg', 'image/svg+xml'], ['photo.png', 'image/png']] as const) {
      const res = await upload(coach, Buffer.from(svg), name, type)
      expect(res.status).toBe(415)
      expect(res.body.message).toBe('SVG drawings are not accepted. Send a photo (JPEG, PNG or WebP).')
    }
    const bare = await upload(coach, Buffer.from('<svg xmlns="http://www.w3.org/2000/svg"/>'), 'x.webp', 'image/webp')
    expect(bare.status).toBe(415)
    expect(bare.body.message).toMatch(/SVG drawings are not accepted/)
  })

  it('refuses a HEIC photo this server cannot decode with advice to switch the camera to JPEG', async () => {
    // Sharp's prebuilt libvips has no HEVC decoder, so a HEIC file (here: a HEIC header, 'ftyp' box with
    // brand 'heic', ISO/IEC 23008-12) is refused whether sharp reports HEIC support or not.
    const heic = Buffer.concat([Buffer.from([0, 0, 0, 24]), Buffer.from('ftypheic'), Buffer.alloc(4), Buffer.from('mif1heic'), Buffer.alloc(64, 7)])
    const res = await upload(coach, heic, 'IMG_0002.HEIC', 'image/heic')
    expect(res.status).toBe(415)
    expect(res.body.message).toMatch(/HEIC format, which this server cannot read\. Send it as JPEG/)
  })

  it('answers 413 to a file over 10 MB, whether the body limit or the file check catches it', async () => {
    const jpeg = await sharp({ create: { width: 64, height: 64, channels: 3, background: { r: 1, g: 2, b: 3 } } }).jpeg().toBuffer()
    const padded = (size: number) => Buffer.concat([jpeg, Buffer.alloc(size - jpeg.byteLength)])
    // Just under 10 MB: accepted, so the refusals below are about size alone.
    const under = await upload(coach, padded(10 * 1024 * 1024 - 4096), 'big.jpg', 'image/jpeg')
    expect(under.status, under.text).toBe(201)
    // One byte over 10 MB fits the request limit (10 MB + framing), so the file check answers.
    const over = await upload(coach, padded(10 * 1024 * 1024 + 1), 'bigger.jpg', 'image/jpeg')
    expect(over.status).toBe(413)
    expect(over.body.message).toBe('That photo is 10.1 MB; the most we accept is 10 MB. Take it again at a lower resolution, or send a smaller copy.')
    // Far over: the body-limit middleware answers from Content-Length before reading it.
    const far = await upload(coach, padded(12 * 1024 * 1024), 'huge.jpg', 'image/jpeg')
    expect(far.status).toBe(413)
  })

  it('refuses a decompression bomb (a small file of 20000 × 20000 pixels) before decoding it', async () => {
    const bomb = await sharp({ create: { width: 20_000, height: 20_000, channels: 3, background: { r: 255, g: 255, b: 255 } }, limitInputPixels: false })
      .png({ compressionLevel: 9 })
      .toBuffer()
    expect(bomb.byteLength).toBeLessThan(10 * 1024 * 1024)
    const res = await upload(coach, bomb, 'bomb.png', 'image/png')
    expect(res.status).toBe(422)
    expect(res.body.message).toMatch(/20000 × 20000 pixels; the most we accept is 40 megapixels/)
    // A long strip is few pixels but still over the 12000 px side limit.
    const strip = await sharp({ create: { width: 12_500, height: 20, channels: 3, background: { r: 0, g: 0, b: 0 } } }).png().toBuffer()
    const stripRes = await upload(coach, strip, 'strip.png', 'image/png')
    expect(stripRes.status).toBe(422)
    expect(stripRes.body.message).toMatch(/12000 pixels a side/)
    // The server is still answering.
    expect((await coach.get('/api/health')).status).toBe(200)
  }, 120_000)

  it('answers 422 to a damaged photo and 400 to a request without a photo, never 500', async () => {
    const jpeg = await sharp({ create: { width: 800, height: 600, channels: 3, background: { r: 9, g: 99, b: 199 } } }).jpeg().toBuffer()
    const cut = await upload(coach, jpeg.subarray(0, 400), 'cut.jpg', 'image/jpeg')
    expect(cut.status).toBe(422)
    expect(cut.body.message).toMatch(/could not be (read|decoded)/)

    const json = await coach.post('/api/uploads', { file: 'photo.jpg' })
    expect(json.status).toBe(400)
    expect(json.body.message).toMatch(/multipart\/form-data in a field named "file"/)
    const wrongField = new FormData()
    wrongField.append('photo', new Blob([TINY_PNG], { type: 'image/png' }), 'a.png')
    expect((await coach.post('/api/uploads', wrongField)).status).toBe(400)
    const empty = await upload(coach, Buffer.alloc(0), 'empty.jpg', 'image/jpeg')
    expect(empty.status).toBe(400)
    expect(empty.body.message).toMatch(/empty/)
    const two = photoForm()
    two.append('file', new Blob([TINY_PNG], { type: 'image/png' }), 'b.png')
    expect((await coach.post('/api/uploads', two)).status).toBe(400)
  })
})

describe('who may upload and read', () => {
  it('lets only coaches and admins upload: learner and auditor 403, anonymous 401', async () => {
    expect((await upload(learner, TINY_PNG, 'a.png', 'image/png')).status).toBe(403)
    expect((await upload(auditor, TINY_PNG, 'a.png', 'image/png')).status).toBe(403)
    const anonymous = await upload(new Client(server.url, uniqueAddress()), TINY_PNG, 'a.png', 'image/png')
    expect(anonymous.status).toBe(401)
  })

  it('serves a photo to every member of the owning organisation and to nobody else', async () => {
    const res = await upload(coach, TINY_PNG, 'step.png', 'image/png')
    expect(res.status).toBe(201)
    for (const member of [a.client, coach, learner, auditor]) {
      expect((await member.get(res.body.url)).status).toBe(200)
      expect((await member.get(res.body.thumbUrl)).status).toBe(200)
    }
    // Another organisation: as if it did not exist.
    for (const url of [res.body.url, res.body.thumbUrl]) {
      const other = await b.client.get(url)
      expect(other.status).toBe(404)
      expect(other.body.message).toBe('That photo was not found in your organisation.')
      expect(other.headers.get('content-type')).not.toMatch(/^image\//)
    }
    expect((await new Client(server.url, uniqueAddress()).get(res.body.url)).status).toBe(401)
    // B's own upload is B's only.
    const mine = await upload(b.client, TINY_PNG, 'b.png', 'image/png')
    expect((await b.client.get(mine.body.url)).status).toBe(200)
    expect((await coach.get(mine.body.url)).status).toBe(404)
  })

  it('answers 404 to unknown and malformed ids and 422 to an unknown size', async () => {
    expect((await coach.get('/api/uploads/8d2f6a38-4b7e-4c55-9b0e-2f1b8c1d9e00')).status).toBe(404)
    expect((await coach.get('/api/uploads/not-an-id')).status).toBe(404)
    const res = await upload(coach, TINY_PNG, 'q.png', 'image/png')
    const bad = await coach.get(`${res.body.url}?size=huge`)
    expect(bad.status).toBe(422)
    expect((await coach.get(`${res.body.url}?size=full`)).status).toBe(200)
  })
})
