import commonPasswordList from 'fxa-common-password-list'

// The list is fxa-common-password-list's: the 50,000 most common passwords of 8 or more
// characters of a public list of one million leaked ones (lower-cased, duplicates dropped). A
// password needs 10 characters here anyway, so only its entries of 10 or more characters count
// (3,527 of them; they include the 2,000 most common of that length, the list this check had before).
const MIN_LENGTH = 10

/** True when the password is on the shipped list of common passwords (case-insensitive, 10 characters or more). */
export function isCommonPassword(password: string): boolean {
  const p = password.trim().toLowerCase()
  return p.length >= MIN_LENGTH && commonPasswordList.test(p)
}
