// Helpers that set up organisations and members through the real API, as a person would.
import { Client, uniqueAddress } from './http'
import type { TestServer } from './server'

export const PASSWORD = 'correct horse battery'

let seq = 0
export function uniqueEmail(label: string) {
  seq += 1
  return `${label}-${process.pid}-${seq}-${Date.now().toString(36)}@test.example`
}

export async function signUp(server: TestServer, organisation = `Org ${uniqueEmail('o')}`) {
  const client = new Client(server.url, uniqueAddress())
  const email = uniqueEmail('admin')
  const res = await client.post('/api/auth/signup', { organisation, name: 'Test Admin', email, password: PASSWORD })
  if (res.status !== 201) throw new Error(`signup failed: ${res.status} ${res.text}`)
  return { client, email, organisationId: res.body.organisation.id as string, userId: res.body.user.id as string }
}

export function tokenFrom(link: string): string {
  return new URL(link).searchParams.get('token') ?? ''
}

/** Invites someone with a role, reads the captured mail, accepts it, and returns their signed-in client. */
export async function addMember(server: TestServer, admin: Client, role: 'admin' | 'coach' | 'learner' | 'auditor') {
  const email = uniqueEmail(role)
  const invite = await admin.post('/api/invites', { email, role })
  if (invite.status !== 201) throw new Error(`invite failed: ${invite.status} ${invite.text}`)
  const mail = await server.waitForMail(m => m.to.includes(email))
  const client = new Client(server.url, uniqueAddress())
  const accepted = await client.post('/api/invites/accept', { token: tokenFrom(mail.links[0]!), name: `Test ${role}`, password: PASSWORD })
  if (accepted.status !== 200) throw new Error(`accept failed: ${accepted.status} ${accepted.text}`)
  return { client, email, userId: accepted.body.user.id as string, membershipId: await membershipIdOf(admin, email) }
}

async function membershipIdOf(admin: Client, email: string): Promise<string> {
  const members = await admin.get<Array<{ id: string, email: string }>>('/api/members')
  return members.body.find(m => m.email === email)?.id ?? ''
}

/** The same person signed in on another server (a second app instance on the same database). */
export async function signInOn(server: TestServer, email: string) {
  const client = new Client(server.url, uniqueAddress())
  const res = await client.post('/api/auth/login', { email, password: PASSWORD })
  if (res.status !== 200) throw new Error(`login on ${server.url}: ${res.status} ${res.text}`)
  return client
}
