// The two judges of the hostile-input tests must themselves catch what they are there to catch:
// badRefusal (tests/support/refusals.ts) a 5xx, an odd status or a message no person can read;
// SnapshotReader (tests/support/db-snapshot.ts) any changed row of an organisation, while it
// cannot write to the file it reads.
import { mkdtemp, rm } from 'node:fs/promises'
import { tmpdir } from 'node:os'
import { join } from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { createClient, type Client } from '@libsql/client'
import { badRefusal, unreadable } from '../support/refusals'
import { changedTables, SnapshotReader } from '../support/db-snapshot'
import type { Reply } from '../support/http'

const reply = (status: number, body: unknown): Reply => ({ status, body, text: JSON.stringify(body), headers: new Headers(), bytes: Buffer.alloc(0) })

describe('badRefusal', () => {
  it('lets successes and proper refusals through', () => {
    expect(badRefusal(reply(201, { id: 'x' }))).toBeNull()
    expect(badRefusal(reply(422, { data: { message: 'Some fields need attention.', fieldErrors: { name: ['Enter a name.'] } } }))).toBeNull()
    expect(badRefusal(reply(409, { data: { message: 'ref is archived. Bring them back to the roster before planning for them.' } }))).toBeNull()
    expect(badRefusal(reply(415, { data: { message: 'SVG drawings are not accepted. Send a photo (JPEG, PNG or WebP).' } }), [415])).toBeNull()
  })

  it('catches a 5xx, a status off the list, a missing or unreadable message, internals in field messages', () => {
    expect(badRefusal(reply(500, { message: 'Internal Server Error' }))).toMatch(/answered 500/)
    expect(badRefusal(reply(418, { data: { message: 'I am a teapot, not a server.' } }))).toMatch(/not one of/)
    expect(badRefusal(reply(415, { data: { message: 'Not a photo we can read.' } }))).toMatch(/not one of/)
    expect(badRefusal(reply(404, { statusCode: 404, message: 'Page not found: /api/x' }))).toMatch(/data.message is missing/)
    expect(badRefusal(reply(422, { data: { message: 'Some fields need attention.', fieldErrors: { name: ['Invalid input: expected string, received undefined'] } } }))).toMatch(/fieldErrors.name/)
    expect(badRefusal(reply(400, { data: { message: 'SQLITE_CONSTRAINT: UNIQUE constraint failed: users.email.' } }))).toMatch(/internals/)
  })

  it('reads a message as a sentence', () => {
    expect(unreadable('Sign in to continue.')).toBeNull()
    expect(unreadable('4 photos were not found in your organisation.')).toBeNull()
    expect(unreadable('Bad Request')).toMatch(/not a sentence/)
    expect(unreadable('')).toMatch(/characters/)
    expect(unreadable('TypeError: Cannot read properties of undefined (reading \'id\').')).toMatch(/internals/)
  })
})

describe('SnapshotReader', () => {
  let dir: string
  let writer: Client
  let url: string
  beforeAll(async () => {
    dir = await mkdtemp(join(tmpdir(), 'fourfold-snapshot-'))
    url = `file:${join(dir, 'test.db')}`
    writer = createClient({ url })
    await writer.executeMultiple(`
      create table organisations (id text primary key, name text);
      create table users (id text primary key, name text);
      create table memberships (id text primary key, organisation_id text, user_id text);
      create table password_resets (id text primary key, user_id text);
      create table work_areas (id text primary key, organisation_id text, name text);
      create table sign_in_failures (id integer primary key, key text);
      insert into organisations values ('a', 'A'), ('b', 'B');
      insert into users values ('ua', 'Ann'), ('ub', 'Bo');
      insert into memberships values ('ma', 'a', 'ua'), ('mb', 'b', 'ub');
      insert into work_areas values ('wa', 'a', 'Bakehouse'), ('wb', 'b', 'Dispatch');
    `)
  })
  afterAll(async () => {
    writer?.close()
    await rm(dir, { recursive: true, force: true })
  })

  it('sees a changed row of the organisation and of its members, and only of that organisation', async () => {
    const reader = await SnapshotReader.open(url)
    const [a0, b0, all0, v0] = [await reader.organisation('a'), await reader.organisation('b'), await reader.everything(), await reader.version()]
    await writer.execute('update work_areas set name = \'Bakehouse 2\' where id = \'wa\'')
    await writer.execute('update users set name = \'Bo B\' where id = \'ub\'')
    await writer.execute('insert into sign_in_failures (key) values (\'x\')')
    expect(await reader.version()).not.toBe(v0)
    expect(changedTables(a0, await reader.organisation('a'))).toEqual(['work_areas'])
    expect(changedTables(b0, await reader.organisation('b'))).toEqual(['users'])
    // The throttle's table is left out on purpose.
    expect(changedTables(all0, await reader.everything())).toEqual(['users', 'work_areas'])
    reader.close()
  })

  it('cannot write to the file', async () => {
    const reader = await SnapshotReader.open(url)
    await expect(reader.query('delete from work_areas')).rejects.toThrow(/readonly|read-only|query_only/i)
    expect((await reader.query('select count(*) as n from work_areas'))[0]!.n).toBe(2)
    reader.close()
  })
})
