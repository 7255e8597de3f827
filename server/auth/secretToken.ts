/**
 * One-time link tokens and API tokens: 32 random bytes (base64url), stored only as their SHA-256. A plain hash is
 * enough here (unlike passwords) because the secret has 256 bits of entropy: nobody can guess it from the hash.
 */
import { createHash, randomBytes } from 'node:crypto'

/** Hex SHA-256 of a token, the form kept in the database. */
export function hashSecretToken(token: string): string {
  return createHash('sha256').update(token, 'utf8').digest('hex')
}

/** A fresh token (optionally prefixed, e.g. 'rmn_') and its hash. */
export function createSecretToken(prefix = ''): { token: string; hash: string } {
  const token = prefix + randomBytes(32).toString('base64url')
  return { token, hash: hashSecretToken(token) }
}
