// Password hashing cost, at OWASP ASVS 5.0 Appendix C's minimum for scrypt
// (N = 2^17, r = 8, p = 1). One hash needs 128 × N × r = 128 MiB, so maxMemory is above that.
export const PASSWORD_SCRYPT_SETTINGS = {
  cost: 131072,
  blockSize: 8,
  parallelization: 1,
  maxMemory: 256 * 1024 * 1024,
} as const
