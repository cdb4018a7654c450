import { createHash, randomBytes } from 'node:crypto'

/** A random secret for a link or a rig token; only its hash is stored. */
export function newToken(prefix = ''): string {
  return prefix + randomBytes(32).toString('base64url')
}

export function hashToken(token: string): string {
  return createHash('sha256').update(token).digest('hex')
}
