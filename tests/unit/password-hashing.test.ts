import { scryptSync, timingSafeEqual } from 'node:crypto'
import { describe, expect, it } from 'vitest'
import { Hash } from '@adonisjs/hash'
import { Scrypt } from '@adonisjs/hash/drivers/scrypt'
import { PASSWORD_SCRYPT_SETTINGS } from '../../server/utils/password-settings'

describe('password hashing settings', () => {
  // OWASP ASVS 5.0 Appendix C (cryptography): scrypt with N >= 2^17, r = 8, p = 1.
  it('meets ASVS 5.0 Appendix C for scrypt', () => {
    expect(PASSWORD_SCRYPT_SETTINGS.cost).toBeGreaterThanOrEqual(2 ** 17)
    expect(PASSWORD_SCRYPT_SETTINGS.blockSize).toBe(8)
    expect(PASSWORD_SCRYPT_SETTINGS.parallelization).toBe(1)
    // scrypt needs 128 · N · r bytes (RFC 7914 §2); the cap must be above it or hashing fails.
    expect(PASSWORD_SCRYPT_SETTINGS.maxMemory).toBeGreaterThan(128 * PASSWORD_SCRYPT_SETTINGS.cost * PASSWORD_SCRYPT_SETTINGS.blockSize)
  })

  it('Node\'s scrypt matches the RFC 7914 §12 test vector (value recalled from memory of the RFC)', () => {
    const out = scryptSync('password', 'NaCl', 64, { N: 1024, r: 8, p: 16 })
    expect(out.toString('hex')).toBe(
      'fdbabe1c9d3472007856e7190d01e9fe7c6ad7cbc8237830e77376634b373162'
      + '2eaf30d92e22a3886ff109279d9830dac727afb94a83ee6d8360cbdfa2cc0640',
    )
  })

  it('stores a PHC string whose parameters an independent scrypt (Node\'s, checked above) reproduces', async () => {
    const hash = new Hash(new Scrypt({ ...PASSWORD_SCRYPT_SETTINGS }))
    const phc = await hash.make('a long demo passphrase')
    const match = /^\$scrypt\$n=(\d+),r=(\d+),p=(\d+)\$([^$]+)\$([^$]+)$/.exec(phc)
    expect(match).not.toBeNull()
    const [, n, r, p, salt, digest] = match!
    expect(Number(n)).toBe(131072)
    const expected = Buffer.from(digest!, 'base64')
    const recomputed = scryptSync('a long demo passphrase', Buffer.from(salt!, 'base64'), expected.length, { N: Number(n), r: Number(r), p: Number(p), maxmem: PASSWORD_SCRYPT_SETTINGS.maxMemory })
    expect(timingSafeEqual(recomputed, expected)).toBe(true)
    expect(await hash.verify(phc, 'a long demo passphrase')).toBe(true)
    expect(await hash.verify(phc, 'a wrong passphrase')).toBe(false)
  })
})
