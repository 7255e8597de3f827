/**
 * Password hashing with scrypt (node:crypto), a memory-hard KDF. Stored as `scrypt$N$r$p$salt$hash` (base64) so the
 * cost can be raised later without breaking existing hashes.
 */
import { randomBytes, scrypt as scryptCallback, timingSafeEqual } from 'node:crypto'

const COST = { N: 16384, r: 8, p: 1 }
const KEY_LENGTH = 64

function scrypt(password: string, salt: Buffer, N: number, r: number, p: number): Promise<Buffer> {
  return new Promise((resolve, reject) =>
    scryptCallback(password, salt, KEY_LENGTH, { N, r, p, maxmem: 64 * 1024 * 1024 }, (err, key) => (err ? reject(err) : resolve(key))),
  )
}

export async function hashPassword(password: string): Promise<string> {
  const salt = randomBytes(16)
  const key = await scrypt(password, salt, COST.N, COST.r, COST.p)
  return ['scrypt', COST.N, COST.r, COST.p, salt.toString('base64'), key.toString('base64')].join('$')
}

export async function verifyPassword(password: string, stored: string | null): Promise<boolean> {
  if (!stored) return false
  const [scheme, N, r, p, salt, hash] = stored.split('$')
  if (scheme !== 'scrypt' || !salt || !hash) return false
  const expected = Buffer.from(hash, 'base64')
  const key = await scrypt(password, Buffer.from(salt, 'base64'), Number(N), Number(r), Number(p))
  return key.length === expected.length && timingSafeEqual(key, expected)
}

/**
 * Password rules after current common guidance (NIST SP 800-63B §5.1.1.2 [from memory]): at least 12 characters,
 * no composition rules, at most 256, and not one of a short list of obvious choices.
 */
export function passwordProblem(password: string, email?: string): string | null {
  if (password.length < 12) return 'Use at least 12 characters.'
  if (password.length > 256) return 'Use at most 256 characters.'
  const lower = password.toLowerCase()
  if (['password1234', '123456789012', 'qwertyuiopas', 'remanence123'].includes(lower)) return 'This password is too common.'
  if (email && lower.includes(email.split('@')[0].toLowerCase()) && email.split('@')[0].length >= 4) return 'Do not use your e-mail name in the password.'
  return null
}
