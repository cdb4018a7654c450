import { describe, expect, it } from 'vitest'
import { FIRST_RANK, RANK_DIGITS, compareRanks, isValidRank, rankBetween, spreadRanks } from '#shared/utils/rank'

// Ranks order cards by plain byte comparison; every new rank must fall strictly between its
// neighbours and be well formed, whatever sequence of moves made the neighbours.

/** A small deterministic generator, so a failure can be replayed. */
function lcg(seed: number) {
  let s = seed >>> 0
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0
    return s / 2 ** 32
  }
}

describe('rankBetween', () => {
  it.each([
    // [before, after, expected]: worked out by hand from the rank's shape (head, integer, fraction)
    [null, null, 'a0'],
    ['a0', null, 'a1'],
    ['az', null, 'b00'], // the 1-digit integers are used up: next head, two digits
    [null, 'a0', 'Zz'], // below the first rank: the integers count down
    [null, 'Z0', 'Yzz'],
    ['a0', 'a1', 'a0V'], // halfway through the fraction: digit 31 of 62 is "V"
    ['a0', 'a0V', 'a0G'],
    ['a0V', 'a1', 'a0l'],
    ['a0', 'a2', 'a1'], // an integer between them: no fraction needed
    ['a0V', 'a0W', 'a0VV'],
    ['a0z', 'a1', 'a0zV'],
    [null, 'a0V', 'a0'], // the integer part of a rank with a fraction sits below it
    ['a0', 'a01', 'a00V'],
  ] as const)('between %s and %s is %s', (before, after, expected) => {
    const r = rankBetween(before, after)
    expect(r).toBe(expected)
    expect(isValidRank(r)).toBe(true)
    if (before !== null) expect(compareRanks(before, r)).toBe(-1)
    if (after !== null) expect(compareRanks(r, after)).toBe(-1)
  })

  it.each([
    ['a1', 'a0'],
    ['a0', 'a0'],
  ])('refuses neighbours out of order (%s, %s)', (a, b) => {
    expect(() => rankBetween(a, b)).toThrow(RangeError)
  })

  it.each(['', 'a', '0a', 'a0 ', 'a00', 'b1', 'a1-', 'Z'])('refuses the malformed rank %j', (bad) => {
    expect(isValidRank(bad)).toBe(false)
    expect(() => rankBetween(bad, null)).toThrow(RangeError)
  })

  it('keeps appends and prepends short', () => {
    let last: string | null = null
    let first: string | null = null
    for (let i = 0; i < 10_000; i++) {
      const next = rankBetween(last, null)
      if (last !== null) expect(last < next).toBe(true)
      last = next
      const prev = rankBetween(null, first)
      if (first !== null) expect(prev < first).toBe(true)
      first = prev
    }
    // 10,000 steps need three base-62 digits
    expect(last!.length).toBeLessThanOrEqual(4)
    expect(first!.length).toBeLessThanOrEqual(4)
  })

  it('grows by about one character per six inserts into the same gap', () => {
    let lo = 'a0'
    const hi = 'a1'
    for (let i = 0; i < 60; i++) lo = rankBetween(lo, hi)
    // each insert halves the gap; a base-62 digit holds log2(62) ≈ 5.95 halvings
    expect(lo.length).toBeGreaterThan(2 + 8)
    expect(lo.length).toBeLessThanOrEqual(2 + 12)
  })

  it('matches a list model under thousands of random inserts', () => {
    const rnd = lcg(20261201)
    const lane: string[] = []
    for (let i = 0; i < 5000; i++) {
      const at = Math.floor(rnd() * (lane.length + 1))
      const r = rankBetween(lane[at - 1] ?? null, lane[at] ?? null)
      expect(isValidRank(r)).toBe(true)
      lane.splice(at, 0, r)
    }
    const sorted = [...lane].sort(compareRanks)
    expect(sorted).toEqual(lane)
    expect(new Set(lane).size).toBe(lane.length)
    // random positions keep ranks short: far under the server's soft limit
    expect(Math.max(...lane.map(r => r.length))).toBeLessThan(12)
  })
})

describe('spreadRanks', () => {
  it('gives n short, ascending, valid ranks starting at the first rank', () => {
    const ranks = spreadRanks(5000)
    expect(ranks[0]).toBe(FIRST_RANK)
    expect(ranks[62]).toBe('b00')
    expect(ranks.every(isValidRank)).toBe(true)
    for (let i = 1; i < ranks.length; i++) expect(ranks[i - 1]! < ranks[i]!).toBe(true)
    // 62 one-digit and 62² two-digit integers: the 3,907th rank is the first with three digits
    expect(ranks[3905]).toBe('bzz')
    expect(ranks[3906]).toBe('c000')
    expect(Math.max(...ranks.map(r => r.length))).toBe(4)
  })
})

describe('the digit alphabet', () => {
  it('is in byte order, as the database compares ranks', () => {
    expect([...RANK_DIGITS].sort().join('')).toBe(RANK_DIGITS)
    expect(RANK_DIGITS).toHaveLength(62)
  })
})
