// Failed sign-ins counted per account and per address, in the database so
// that every app instance enforces the same limit.
import { and, eq, gt, lt, or } from 'drizzle-orm'
import { signInFailures } from '../db/schema'
import { SIGN_IN_WINDOW_MS, throttleDecision } from '../../shared/utils/throttle'

export interface ThrottleKeys { account: string, address: string }

export async function checkSignInThrottle(keys: ThrottleKeys, now = Date.now()) {
  const db = await useDb()
  const rows = await db.select({ scope: signInFailures.scope, at: signInFailures.at })
    .from(signInFailures)
    .where(and(
      or(
        and(eq(signInFailures.scope, 'account'), eq(signInFailures.key, keys.account)),
        and(eq(signInFailures.scope, 'address'), eq(signInFailures.key, keys.address)),
      ),
      gt(signInFailures.at, new Date(now - SIGN_IN_WINDOW_MS)),
    ))
  const times = (scope: 'account' | 'address') => rows.filter(r => r.scope === scope).map(r => r.at.getTime())
  const account = throttleDecision(times('account'), now)
  const address = throttleDecision(times('address'), now)
  return { blocked: account.blocked || address.blocked, retryAfterSeconds: Math.max(account.retryAfterSeconds, address.retryAfterSeconds) }
}

export async function recordSignInFailure(keys: ThrottleKeys, now = Date.now()) {
  const db = await useDb()
  await serialiseWrite(() => db.batch([
    db.insert(signInFailures).values([
      { scope: 'account', key: keys.account, at: new Date(now) },
      { scope: 'address', key: keys.address, at: new Date(now) },
    ]),
    // Rows older than the window no longer count for anything.
    db.delete(signInFailures).where(lt(signInFailures.at, new Date(now - SIGN_IN_WINDOW_MS))),
  ]))
}

export async function clearAccountFailures(account: string) {
  const db = await useDb()
  await serialiseWrite(() => db.delete(signInFailures).where(and(eq(signInFailures.scope, 'account'), eq(signInFailures.key, account))))
}
