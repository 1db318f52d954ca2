import { randomBytes, scrypt as scryptCb, timingSafeEqual, type ScryptOptions } from 'node:crypto'

// scrypt from node:crypto; N = 2^15, r = 8, p = 1 is at the OWASP Password Storage Cheat Sheet's floor (N=2^17 with p=1,
// or equivalent), chosen so a sign-in costs tens of milliseconds on a 2-core server. Parameters travel with the hash.
const DEFAULT = { N: 2 ** 15, r: 8, p: 1, keyLength: 64 }

function scrypt(password: string, salt: Buffer, keyLength: number, options: ScryptOptions): Promise<Buffer> {
  return new Promise((resolve, reject) =>
    scryptCb(password.normalize('NFKC'), salt, keyLength, options, (err, key) => (err ? reject(err) : resolve(key))),
  )
}

const maxmem = (N: number, r: number) => 128 * N * r * 2

/** Hashes a password as `scrypt$N$r$p$salt$key` (base64url). */
export async function hashPassword(password: string, params = DEFAULT): Promise<string> {
  const salt = randomBytes(16)
  const key = await scrypt(password, salt, params.keyLength, { N: params.N, r: params.r, p: params.p, maxmem: maxmem(params.N, params.r) })
  return ['scrypt', params.N, params.r, params.p, salt.toString('base64url'), key.toString('base64url')].join('$')
}

/** Checks a password against a stored hash in constant time; false for any malformed hash. */
export async function verifyPassword(password: string, stored: string): Promise<boolean> {
  const parts = stored.split('$')
  if (parts.length !== 6 || parts[0] !== 'scrypt') return false
  const [N, r, p] = parts.slice(1, 4).map(Number)
  const salt = Buffer.from(parts[4], 'base64url')
  const expected = Buffer.from(parts[5], 'base64url')
  if (![N, r, p].every(Number.isInteger) || expected.length === 0) return false
  const actual = await scrypt(password, salt, expected.length, { N, r, p, maxmem: maxmem(N, r) })
  return timingSafeEqual(actual, expected)
}

let dummyHash: Promise<string> | null = null
/** Spends the same time as a real check, so an unknown email cannot be told from a wrong password by timing. */
export async function burnPasswordCheck(password: string): Promise<void> {
  dummyHash ??= hashPassword('startproof-timing-equaliser')
  await verifyPassword(password, await dummyHash)
}
