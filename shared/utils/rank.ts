// Ranks: short strings whose byte order is the order of the cards in a lane. A move makes a new
// rank between the two neighbours it lands between, so it writes one row and the rest of the
// lane keeps its ranks. Pure; the server and the board's optimistic moves both use it.
//
// Shape of a rank: a head letter, that many integer digits, then an optional fraction.
//   head a…z: 1…26 integer digits, counting up from "a0" (the first rank of an empty lane);
//   head Z…A: 1…26 integer digits, counting down below "a0" (cards put before the first).
// Digits are 0-9A-Za-z (base 62, in ASCII order). A fraction never ends in "0", so every position
// has exactly one spelling and plain byte comparison (PostgreSQL's "C" collation) orders ranks.
// Appending or prepending steps the integer (the rank grows by a character every ~62^k moves);
// inserting between two cards halves the gap in the fraction (a character per ~6 inserts into
// the very same gap), which is why the server re-spreads a lane when a rank gets long.

export const RANK_DIGITS = '0123456789ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz'
const BASE = RANK_DIGITS.length

/** The rank of the first card in an empty lane. */
export const FIRST_RANK = 'a0'

/** Ranks longer than this are still valid; the server spreads the lane out again past it. */
export const RANK_SOFT_LIMIT = 48

/** The database refuses ranks longer than this. */
export const RANK_MAX_LENGTH = 200

function intLength(head: string | undefined): number | null {
  if (head === undefined || head.length !== 1) return null
  if (head >= 'a' && head <= 'z') return head.charCodeAt(0) - 96
  if (head >= 'A' && head <= 'Z') return 91 - head.charCodeAt(0)
  return null
}

/** True when `rank` is a well-formed rank. */
export function isValidRank(rank: unknown): rank is string {
  if (typeof rank !== 'string' || rank.length > RANK_MAX_LENGTH) return false
  const len = intLength(rank[0])
  if (len === null || rank.length < 1 + len) return false
  for (const ch of rank.slice(1)) if (!RANK_DIGITS.includes(ch)) return false
  return !(rank.length > 1 + len && rank.endsWith('0'))
}

function split(rank: string): { int: string, frac: string } {
  if (!isValidRank(rank)) throw new RangeError(`Not a rank: ${JSON.stringify(rank)}`)
  const len = intLength(rank[0])!
  return { int: rank.slice(0, 1 + len), frac: rank.slice(1 + len) }
}

function step(int: string, dir: 1 | -1): string {
  const head = int[0]!
  const digits = [...int.slice(1)].map(d => RANK_DIGITS.indexOf(d))
  for (let i = digits.length - 1; i >= 0; i--) {
    const d = digits[i]! + dir
    if (d >= 0 && d < BASE) {
      digits[i] = d
      return head + digits.map(x => RANK_DIGITS[x]).join('')
    }
    digits[i] = dir === 1 ? 0 : BASE - 1
  }
  // every digit carried: the next (or previous) head, with one digit more (or fewer)
  if ((dir === 1 && head === 'z') || (dir === -1 && head === 'A')) throw new RangeError('No rank left at this end of the lane')
  const next = dir === 1 ? (head === 'Z' ? 'a' : String.fromCharCode(head.charCodeAt(0) + 1)) : (head === 'a' ? 'Z' : String.fromCharCode(head.charCodeAt(0) - 1))
  return next + (dir === 1 ? '0' : 'z').repeat(intLength(next)!)
}

/** A fraction strictly between fractions `a` and `b` (null: 1), with no trailing "0". Needs a < b. */
function midpoint(a: string, b: string | null): string {
  if (b !== null) {
    let n = 0
    while ((a[n] ?? '0') === b[n]) n++
    if (n > 0) return b.slice(0, n) + midpoint(a.slice(n), b.slice(n))
  }
  const da = a ? RANK_DIGITS.indexOf(a[0]!) : 0
  const db = b !== null ? RANK_DIGITS.indexOf(b[0]!) : BASE
  if (db - da > 1) return RANK_DIGITS[Math.round((da + db) / 2)]!
  if (b !== null && b.length > 1) return b[0]!
  return RANK_DIGITS[da]! + midpoint(a.slice(1), null)
}

/**
 * A rank strictly between `before` and `after` (the ranks of the cards the new one goes between;
 * null for the start or the end of the lane). Throws a RangeError when `before` is not below `after`.
 */
export function rankBetween(before: string | null, after: string | null): string {
  if (before !== null && after !== null && !(before < after)) {
    throw new RangeError(`Ranks out of order: ${JSON.stringify(before)} is not below ${JSON.stringify(after)}`)
  }
  if (before === null && after === null) return FIRST_RANK
  if (before === null) {
    const b = split(after!)
    return b.frac ? b.int : step(b.int, -1)
  }
  const a = split(before)
  if (after === null) return step(a.int, 1)
  const b = split(after)
  if (a.int === b.int) return a.int + midpoint(a.frac, b.frac)
  const next = step(a.int, 1)
  return next < after ? next : a.int + midpoint(a.frac, null)
}

/** `n` short ascending ranks, for spreading a lane out again. */
export function spreadRanks(n: number): string[] {
  const out: string[] = []
  let r = FIRST_RANK
  for (let i = 0; i < n; i++) {
    out.push(r)
    r = step(r, 1)
  }
  return out
}

/** Byte order, as the database compares ranks (not localeCompare). */
export function compareRanks(a: string, b: string): number {
  return a < b ? -1 : a > b ? 1 : 0
}
