// Requests to a benchmark server, and the accounts they act as.
import { readdir, readFile } from 'node:fs/promises'
import { join } from 'node:path'
import { sleep } from './cleanup.mjs'

export const PASSWORD = 'correct horse battery staple'

// Addresses from 198.18.0.0/15 (RFC 2544, for benchmarks); one per request.
let addressCounter = 0
export function nextAddress() {
  addressCounter = (addressCounter + 1) % 65_536
  return `198.18.${addressCounter >> 8}.${addressCounter & 255}`
}

/** A JSON request; `cookie` is "name=value" or undefined; a string body is sent as it is. */
export async function request(server, method, path, body, { cookie, timeoutMs = 30_000 } = {}) {
  return fetch(`${server.url}${path}`, {
    method,
    headers: {
      ...(body === undefined ? {} : { 'content-type': 'application/json' }),
      'x-forwarded-for': nextAddress(),
      ...(cookie ? { cookie } : {}),
    },
    body: body === undefined ? undefined : typeof body === 'string' ? body : JSON.stringify(body),
    signal: AbortSignal.timeout(timeoutMs),
  })
}

export async function post(server, path, body) {
  return request(server, 'POST', path, body)
}

/** The answer's JSON when its status is the expected one; otherwise an error that says what came back. */
export async function expectJson(res, status, what) {
  const text = await res.text()
  if (res.status !== status) throw new Error(`${what} answered ${res.status}: ${text.slice(0, 2000)}`)
  return text ? JSON.parse(text) : null
}

/** Signs up an organisation with its first admin; returns the answer's body. */
export async function signUp(server, email, { organisation = `Bench ${server.label}`, name = 'Bench Admin' } = {}) {
  const res = await post(server, '/api/auth/signup', { organisation, name, email, password: PASSWORD })
  if (res.status !== 201) throw new Error(`${server.label}: sign-up answered ${res.status}: ${await res.text()}\n${server.output()}`)
  return res.json()
}

function sessionCookie(res, what) {
  const cookie = res.headers.getSetCookie().map(c => c.split(';')[0]).find(c => c.startsWith('fourfold-session='))
  if (!cookie) throw new Error(`${what} set no fourfold-session cookie`)
  return cookie
}

/** Signs in once and returns the session cookie as "name=value". */
export async function signIn(server, email) {
  const res = await post(server, '/api/auth/login', { email, password: PASSWORD })
  if (res.status !== 200) throw new Error(`${server.label}: sign-in answered ${res.status}: ${await res.text()}`)
  return sessionCookie(res, `${server.label}: sign-in`)
}

/** Invites `email` with `role`, reads the link from the server's captured mail, accepts it; returns { userId, cookie }. */
export async function addMember(server, adminCookie, email, role, name = `Bench ${role}`) {
  const invite = await request(server, 'POST', '/api/invites', { email, role }, { cookie: adminCookie })
  await expectJson(invite, 201, `${server.label}: invite`)
  let link
  for (let attempt = 0; attempt < 100 && !link; attempt++) {
    const names = await readdir(server.mailDir).catch(() => [])
    for (const file of names.filter(n => n.endsWith('.json'))) {
      const mail = JSON.parse(await readFile(join(server.mailDir, file), 'utf8'))
      if (mail.to?.includes(email)) link = mail.links?.[0]
    }
    if (!link) await sleep(100)
  }
  if (!link) throw new Error(`${server.label}: no invitation mail to ${email} was captured`)
  const token = new URL(link).searchParams.get('token') ?? ''
  const accepted = await request(server, 'POST', '/api/invites/accept', { token, name, password: PASSWORD })
  if (accepted.status !== 200) throw new Error(`${server.label}: accepting the invitation answered ${accepted.status}: ${await accepted.text()}`)
  const cookie = sessionCookie(accepted, `${server.label}: accepting the invitation`)
  const body = await accepted.json()
  return { userId: body.user.id, cookie }
}

/** A job with `content` published as its first version (created by `cookie`, published by `adminCookie`); returns { jobId, versionId }. */
export async function publishBreakdown(server, cookie, adminCookie, content, title = 'Clean the dough divider') {
  const job = await expectJson(await request(server, 'POST', '/api/jobs', { title, hazards: [{ category: 'sharp-edges', description: 'Divider knife' }] }, { cookie }), 201, 'create job')
  const draft = await expectJson(await request(server, 'POST', `/api/jobs/${job.id}/versions`, undefined, { cookie }), 201, 'create draft')
  await expectJson(await request(server, 'PATCH', `/api/versions/${draft.id}`, { revision: draft.revision, content }, { cookie }), 200, 'save draft')
  await expectJson(await request(server, 'POST', `/api/versions/${draft.id}/publish`, { changeNote: 'First version.' }, { cookie: adminCookie }), 200, 'publish')
  return { jobId: job.id, versionId: draft.id }
}

/** Adds learners by name; returns their ids in the same order. */
export async function addLearners(server, cookie, names) {
  const ids = []
  for (const name of names) ids.push((await expectJson(await request(server, 'POST', '/api/learners', { name }, { cookie }), 201, 'add learner')).id)
  return ids
}
