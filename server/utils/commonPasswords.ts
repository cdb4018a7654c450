import { COMMON_PASSWORDS } from '../data/commonPasswords'

let common: Set<string> | undefined

/** True when the password is on the shipped list of common passwords (case-insensitive). */
export function isCommonPassword(password: string): boolean {
  common ??= new Set(COMMON_PASSWORDS.split('\n').map(l => l.trim().toLowerCase()).filter(Boolean))
  return common.has(password.trim().toLowerCase())
}
