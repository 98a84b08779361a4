// Password checks that take the same time whether or not the account exists,
// so sign-in cannot be used to find out who has an account.
let dummyHash: Promise<string> | undefined

export async function verifyPasswordOrDummy(storedHash: string | undefined, password: string): Promise<boolean> {
  if (storedHash) return verifyPassword(storedHash, password)
  dummyHash ??= hashPassword('fourfold-timing-equaliser')
  await verifyPassword(await dummyHash, password)
  return false
}
