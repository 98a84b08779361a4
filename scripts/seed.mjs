// npm run seed — put the demo organisation into DATABASE_URL when it holds no organisation yet.
import { createJiti } from 'jiti'
import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'
import { openMigratedDb, root } from './db.mjs'

const jiti = createJiti(import.meta.url)
const schema = await jiti.import(`${root}/server/db/schema.ts`)
const demo = await jiti.import(`${root}/server/db/demo-seed.ts`)
const { PASSWORD_SCRYPT_SETTINGS } = await jiti.import(`${root}/server/utils/password-settings.ts`)

export async function seedIfEmpty() {
  const { db, client, url } = await openMigratedDb(schema)
  try {
    if (!(await demo.databaseIsEmpty(db))) return { seeded: false, url }
    // Same hash format and settings as the server's nuxt-auth-utils hashPassword.
    const hash = new Hash(new Scrypt({ ...PASSWORD_SCRYPT_SETTINGS }))
    await demo.seedDemo(db, { password: process.env.DEMO_PASSWORD || demo.DEFAULT_DEMO_PASSWORD, hash: pw => hash.make(pw) })
    return { seeded: true, url }
  }
  finally {
    client.close()
  }
}

export function demoAccounts() {
  return demo.DEMO_ACCOUNTS
}

export function demoPassword() {
  return process.env.DEMO_PASSWORD || demo.DEFAULT_DEMO_PASSWORD
}

if (import.meta.url === `file://${process.argv[1]}`) {
  const { seeded, url } = await seedIfEmpty()
  console.log(seeded ? `Demo organisation "${demo.DEMO_ORGANISATION}" seeded into ${url}` : `${url} already holds an organisation; nothing seeded.`)
}
