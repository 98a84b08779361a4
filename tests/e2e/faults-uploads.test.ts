// Photo storage failing during an upload: the uploader gets a clear 503 with words, nothing
// half-written stays in storage, no uploads row points at a missing object, and a breakdown that
// names the failed upload's id is refused. Once storage works again, uploads go in as usual.
// Two stores: the filesystem (UPLOAD_DIR, the organisation's folder made unwritable by a file in
// its place — root writes through permission bits, not through that) and an S3-compatible stand-in
// on loopback that answers 500 to the thumbnail, after the photo itself went in.
import { createServer, type Server } from 'node:http'
import { rm, writeFile } from 'node:fs/promises'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { freePort, startServer, type TestServer } from '../support/server'
import { signUp } from '../support/accounts'
import { photoForm } from '../support/photos'
import { slicerContent } from '../support/breakdowns'
import type { Client } from '../support/http'
import { sql } from '../support/db'

const servers: TestServer[] = []
afterAll(async () => {
  await Promise.all(servers.map(s => s.stop()))
  await new Promise(r => s3?.close(r))
})

async function uploadRows(server: TestServer, organisationId: string) {
  const rows = await sql(server.databaseUrl, 'select id from uploads where organisation_id = ?', [organisationId])
  const audited = await sql(server.databaseUrl, 'select count(*) as n from audit_log where organisation_id = ? and action = ?', [organisationId, 'upload.created'])
  return { ids: rows.rows.map(r => r.id as string), audited: Number(audited.rows[0]!.n) }
}

/** A draft whose first step names `photoId`; the answer to saving it. */
async function saveDraftNaming(client: Client, photoId: string) {
  const job = await client.post('/api/jobs', { title: 'Thread film on the bag sealer', hazards: [] })
  const draft = await client.post(`/api/jobs/${job.body.id}/versions`)
  const content = slicerContent()
  content.units[0]!.steps[0]!.photoId = photoId
  return client.patch(`/api/versions/${draft.body.id}`, { revision: draft.body.revision, content })
}

describe('the filesystem photo store failing', () => {
  let server: TestServer
  let admin: Awaited<ReturnType<typeof signUp>>
  beforeAll(async () => {
    server = await startServer()
    servers.push(server)
    admin = await signUp(server)
  })

  it('answers 503 in words, keeps no row and no file, and works again once the folder can be written', async () => {
    // The organisation's photo folder cannot be made: a plain file stands where it would be.
    const blocked = join(server.dir, 'uploads', admin.organisationId)
    await rm(join(server.dir, 'uploads'), { recursive: true, force: true })
    const { mkdir } = await import('node:fs/promises')
    await mkdir(join(server.dir, 'uploads'), { recursive: true })
    await writeFile(blocked, 'not a folder')

    const refused = await admin.client.post('/api/uploads', photoForm())
    expect(refused.status, refused.text).toBe(503)
    expect(refused.body.data.message).toMatch(/could not save this photo just now, so nothing was saved/)
    expect(Number(refused.headers.get('retry-after'))).toBeGreaterThan(0)
    expect(await uploadRows(server, admin.organisationId)).toEqual({ ids: [], audited: 0 })

    await rm(blocked)
    const stored = await admin.client.post('/api/uploads', photoForm())
    expect(stored.status, stored.text).toBe(201)
    expect((await admin.client.get(stored.body.thumbUrl)).status).toBe(200)
    expect(await uploadRows(server, admin.organisationId)).toEqual({ ids: [stored.body.id], audited: 1 })
  })
})

// The S3-compatible stand-in: objects in memory, every request recorded, and a switch that makes it
// answer 500 to writes whose key matches.
let s3: Server | undefined
const objects = new Map<string, Buffer>()
const requests: Array<{ method: string, path: string, status: number }> = []
let failWrites: RegExp | null = null

async function startS3(): Promise<number> {
  const port = await freePort()
  s3 = createServer((req, res) => {
    const path = decodeURIComponent(new URL(req.url ?? '/', 'http://s3').pathname)
    const chunks: Buffer[] = []
    req.on('data', (c: Buffer) => chunks.push(c))
    req.on('end', () => {
      const answer = (status: number, body?: Buffer) => {
        requests.push({ method: req.method ?? '', path, status })
        res.statusCode = status
        res.end(body)
      }
      if (req.method === 'PUT') {
        if (failWrites?.test(path)) return answer(500, Buffer.from('<Error><Code>InternalError</Code></Error>'))
        objects.set(path, Buffer.concat(chunks))
        return answer(200)
      }
      if (req.method === 'GET' || req.method === 'HEAD') {
        const found = objects.get(path)
        return found ? answer(200, req.method === 'GET' ? found : undefined) : answer(404)
      }
      if (req.method === 'DELETE') {
        objects.delete(path)
        return answer(204)
      }
      answer(405)
    })
  })
  await new Promise<void>(resolve => s3!.listen(port, '127.0.0.1', resolve))
  return port
}

describe('an S3-compatible photo store failing in the middle of an upload', () => {
  let server: TestServer
  let admin: Awaited<ReturnType<typeof signUp>>
  beforeAll(async () => {
    const port = await startS3()
    server = await startServer({
      env: { S3_BUCKET: 'photos', S3_ENDPOINT: `http://127.0.0.1:${port}`, S3_REGION: 'auto', S3_ACCESS_KEY_ID: 'test-key', S3_SECRET_ACCESS_KEY: 'test-secret' },
    })
    servers.push(server)
    admin = await signUp(server)
  })

  it('removes the photo already stored when its thumbnail fails, answers 503, and a breakdown naming that upload is refused', async () => {
    failWrites = /\.thumb\./
    const refused = await admin.client.post('/api/uploads', photoForm())
    expect(refused.status, refused.text).toBe(503)
    expect(refused.body.data.message).toMatch(/could not save this photo just now, so nothing was saved/)

    // The stand-in took the photo, refused its thumbnail; then the server took both away again.
    const puts = requests.filter(r => r.method === 'PUT')
    expect(puts.map(r => r.status)).toEqual([200, 500])
    const photoPath = puts[0]!.path
    expect(photoPath).toMatch(new RegExp(`^/photos/${admin.organisationId}/[0-9a-f-]{36}\\.\\w+$`))
    expect(requests.filter(r => r.method === 'DELETE').map(r => r.path).sort()).toEqual([photoPath, puts[1]!.path].sort())
    expect([...objects.keys()]).toEqual([])
    expect(await uploadRows(server, admin.organisationId)).toEqual({ ids: [], audited: 0 })

    // The id the failed upload would have had names nothing: a draft that points at it is refused.
    const failedId = photoPath.split('/').pop()!.split('.')[0]!
    const saved = await saveDraftNaming(admin.client, failedId)
    expect(saved.status, saved.text).toBe(422)
    expect(saved.body.data.fieldErrors['units.0.steps.0.photoId']).toBeTruthy()
    expect((await admin.client.get(`/api/uploads/${failedId}`)).status).toBe(404)
  })

  it('refuses an upload whose first write fails, then stores and serves photos once the store answers again', async () => {
    requests.length = 0
    failWrites = /./
    const refused = await admin.client.post('/api/uploads', photoForm())
    expect(refused.status, refused.text).toBe(503)
    expect(requests.filter(r => r.method === 'PUT').map(r => r.status)).toEqual([500])
    expect([...objects.keys()]).toEqual([])

    failWrites = null
    const stored = await admin.client.post('/api/uploads', photoForm())
    expect(stored.status, stored.text).toBe(201)
    expect([...objects.keys()].sort()).toHaveLength(2)
    expect((await admin.client.get(stored.body.url)).status).toBe(200)
    const saved = await saveDraftNaming(admin.client, stored.body.id)
    expect(saved.status, saved.text).toBe(200)
    expect(await uploadRows(server, admin.organisationId)).toEqual({ ids: [stored.body.id], audited: 1 })
  })
})
