import { describe, expect, it } from 'vitest'
import { marginOf, movementOf, statusOf, type TargetRule } from '#shared/utils/conformance'
import { computeStats } from '#shared/utils/readingStats'

// The rules are docs/computation.md §Status and §Movement between revisions (a guarded
// acceptance rule in the sense of ILAC-G8 and ISO 14253-1: the 95 % interval, not the mean, has
// to clear the limit).
// Expected values below follow from those rules by hand; the comment on each row says why.

const atLeast40: TargetRule = { comparator: 'atLeast', threshold: 40 }
const atMost80: TargetRule = { comparator: 'atMost', threshold: 80 }
const band24to25: TargetRule = { comparator: 'between', threshold: 24, thresholdHigh: 25 }

describe('statusOf', () => {
  it.each([
    // [case, stats, target, status]
    ['interval above T', { mean: 42, ci95: [41, 43] }, atLeast40, 'met'],
    ['interval touching T exactly from above', { mean: 41, ci95: [40, 42] }, atLeast40, 'met'],
    ['interval straddling T', { mean: 40.5, ci95: [39.5, 41.5] }, atLeast40, 'marginal'],
    ['mean above T but interval straddling', { mean: 40.1, ci95: [39.9, 40.3] }, atLeast40, 'marginal'],
    ['interval below T', { mean: 38, ci95: [37, 39] }, atLeast40, 'short'],
    ['interval ending exactly at T from below', { mean: 39, ci95: [38, 40] }, atLeast40, 'marginal'],
    ['no interval, mean at T', { mean: 40, ci95: null }, atLeast40, 'met'],
    ['no interval, mean below T', { mean: 39.99, ci95: null }, atLeast40, 'short'],

    // atMost mirrors: Met when ci95 high ≤ T, Short when ci95 low > T.
    ['atMost: interval below T', { mean: 75, ci95: [74, 76] }, atMost80, 'met'],
    ['atMost: interval touching T exactly from below', { mean: 79, ci95: [78, 80] }, atMost80, 'met'],
    ['atMost: interval straddling T', { mean: 80, ci95: [79, 81] }, atMost80, 'marginal'],
    ['atMost: interval starting exactly at T', { mean: 81, ci95: [80, 82] }, atMost80, 'marginal'],
    ['atMost: interval above T', { mean: 82, ci95: [81, 83] }, atMost80, 'short'],
    ['atMost: no interval, mean at T', { mean: 80, ci95: null }, atMost80, 'met'],
    ['atMost: no interval, mean above T', { mean: 80.01, ci95: null }, atMost80, 'short'],

    // between [24, 25]: the whole interval inside the band.
    ['between: interval inside', { mean: 24.5, ci95: [24.2, 24.8] }, band24to25, 'met'],
    ['between: interval equal to the band', { mean: 24.5, ci95: [24, 25] }, band24to25, 'met'],
    ['between: interval over the upper edge', { mean: 24.9, ci95: [24.7, 25.1] }, band24to25, 'marginal'],
    ['between: interval wider than the band', { mean: 24.5, ci95: [23.5, 25.5] }, band24to25, 'marginal'],
    ['between: interval below the band', { mean: 23, ci95: [22.5, 23.5] }, band24to25, 'short'],
    ['between: interval above the band', { mean: 26, ci95: [25.5, 26.5] }, band24to25, 'short'],
    ['between: no interval, mean inside', { mean: 24.2, ci95: null }, band24to25, 'met'],
    ['between: no interval, mean outside', { mean: 25.2, ci95: null }, band24to25, 'short'],

    ['no reading', null, atLeast40, 'untested'],
  ] as const)('%s → %s', (_case, stats, target, status) => {
    expect(statusOf(stats as { mean: number, ci95: [number, number] | null } | null, target)).toBe(status)
  })

  it('n = 1 without resolution: the mean alone decides', () => {
    expect(statusOf(computeStats([40.2]), atLeast40)).toBe('met')
    expect(statusOf(computeStats([39.8]), atLeast40)).toBe('short')
  })

  it('n = 1 with resolution: the ±1.96·δ/√12 interval decides', () => {
    // δ = 1: half-width 1.959964 × 0.288675 = 0.5658 (GUM F.2.2.1 with k for ν = ∞).
    expect(statusOf(computeStats([40.2], 1), atLeast40)).toBe('marginal')
    expect(statusOf(computeStats([40.6], 1), atLeast40)).toBe('met')
    expect(statusOf(computeStats([39.4], 1), atLeast40)).toBe('short')
  })

  it('refuses a between target without a valid upper threshold', () => {
    expect(() => statusOf(null, { comparator: 'between', threshold: 2 })).toThrow(RangeError)
    expect(() => statusOf(null, { comparator: 'between', threshold: 2, thresholdHigh: 1 })).toThrow(RangeError)
  })
})

describe('marginOf', () => {
  it.each([
    // [case, mean, target, margin in % of the threshold]
    ['atLeast 40, mean 44: 4 above = +10 %', 44, atLeast40, 10],
    ['atLeast 40, mean 36: 4 below = −10 %', 36, atLeast40, -10],
    ['atMost 80, mean 72: 8 under = +10 %', 72, atMost80, 10],
    ['atMost 80, mean 88: 8 over = −10 %', 88, atMost80, -10],
    ['between 24–25, mean 24.24: 0.24 above 24 = +1 %', 24.24, band24to25, 1],
    ['between 24–25, mean 24.75: 0.25 under 25 = +1 %', 24.75, band24to25, 1],
    ['between 24–25, mean 23.76: 0.24 below 24 = −1 %', 23.76, band24to25, -1],
    ['between 24–25, mean 25.5: 0.5 over 25 = −2 %', 25.5, band24to25, -2],
    ['atLeast −10, mean −9: 1 above = +10 % of |T|', -9, { comparator: 'atLeast', threshold: -10 }, 10],
  ] as const)('%s', (_case, mean, target, margin) => {
    expect(marginOf(mean, target)).toBeCloseTo(margin, 10)
  })

  it('is null for a threshold of 0, where a percentage means nothing', () => {
    expect(marginOf(1, { comparator: 'atMost', threshold: 0 })).toBeNull()
  })
})

describe('movementOf', () => {
  // Sample sets of the Wikipedia article "Welch's t-test", Examples (example 1: p = 0.021;
  // example 2: p = 0.149), as published by Rosetta Code, task "Welch's t-test" (R's p 0.021378
  // and 0.148842); readingStats.test.ts checks them to 9 decimals.
  const A1 = computeStats([27.5, 21.0, 19.0, 23.6, 17.0, 17.9, 16.9, 20.1, 21.9, 22.6, 23.1, 19.6, 19.0, 21.7, 21.4])
  const A2 = computeStats([27.1, 22.0, 20.8, 23.4, 23.4, 23.5, 25.8, 22.0, 24.8, 20.2, 21.9, 22.1, 22.9, 20.5, 24.4])
  const A3 = computeStats([17.2, 20.9, 22.6, 18.1, 21.7, 21.4, 23.5, 24.2, 14.7, 21.8])
  const A4 = computeStats([21.5, 22.8, 21.0, 23.0, 21.6, 23.6, 22.5, 20.7, 23.4, 21.8, 20.7, 21.7, 21.5, 22.5, 23.6, 21.5, 22.5, 23.5, 21.5, 21.8])
  // mean(A2) − mean(A1) = 22.98667 − 20.82 = 2.16667.

  it.each([
    // [case, before, now, target, movement, real, reason]
    ['atLeast, up with p = 0.021 < 0.05', A1, A2, { comparator: 'atLeast', threshold: 20 }, 'gained', true, 'welch'],
    ['atLeast, down with p = 0.021', A2, A1, { comparator: 'atLeast', threshold: 20 }, 'slipped', true, 'welch'],
    ['atMost, up with p = 0.021', A1, A2, { comparator: 'atMost', threshold: 30 }, 'slipped', true, 'welch'],
    ['atMost, down with p = 0.021', A2, A1, { comparator: 'atMost', threshold: 30 }, 'gained', true, 'welch'],
    ['p = 0.149 ≥ 0.05: inside the scatter', A3, A4, { comparator: 'atLeast', threshold: 20 }, 'steady', false, 'welch'],
    ['significant but |Δ| = 2.17 < noise band 3', A1, A2, { comparator: 'atLeast', threshold: 20, noiseBand: 3 }, 'steady', false, 'noise-band'],
    ['significant and |Δ| = 2.17 ≥ noise band 2', A1, A2, { comparator: 'atLeast', threshold: 20, noiseBand: 2 }, 'gained', true, 'welch'],
  ] as const)('%s → %s', (_case, before, now, target, movement, real, reason) => {
    const r = movementOf(before, now, target)
    expect(r.movement).toBe(movement)
    expect(r.real).toBe(real)
    expect(r.reason).toBe(reason)
    expect(r.delta).toBeCloseTo(now.mean - before.mean, 12)
    expect(r.p).not.toBeNull()
  })

  it('reports the Welch p (example 1: 0.021)', () => {
    expect(movementOf(A1, A2, { comparator: 'atLeast', threshold: 20 }).p).toBeCloseTo(0.021, 3)
  })

  const one = (mean: number) => ({ n: 1, mean, sd: null })

  it.each([
    // A side with n < 2: a real change when |Δ| exceeds the noise band.
    ['n = 1, Δ = +2 > band 1, atLeast', one(10), one(12), { comparator: 'atLeast', threshold: 11, noiseBand: 1 }, 'gained', 'noise-band'],
    ['n = 1, Δ = −2, |Δ| > band 1, atLeast', one(12), one(10), { comparator: 'atLeast', threshold: 11, noiseBand: 1 }, 'slipped', 'noise-band'],
    ['n = 1, Δ = +2 < band 3', one(10), one(12), { comparator: 'atLeast', threshold: 11, noiseBand: 3 }, 'steady', 'noise-band'],
    ['n = 1, Δ = band exactly: not beyond it', one(10), one(12), { comparator: 'atLeast', threshold: 11, noiseBand: 2 }, 'steady', 'noise-band'],
    ['n = 1, no band', one(10), one(12), { comparator: 'atLeast', threshold: 11 }, 'steady', 'not-enough-data'],
    ['n = 1 now, n = 15 before, no band', A1, one(30), { comparator: 'atLeast', threshold: 11 }, 'steady', 'not-enough-data'],
    // between [24, 25], midpoint 24.5: closer to it is good.
    ['between, 23.0 → 24.4 moves towards the middle', one(23), one(24.4), { ...band24to25, noiseBand: 0.5 }, 'gained', 'noise-band'],
    ['between, 24.5 → 25.5 moves away from the middle', one(24.5), one(25.5), { ...band24to25, noiseBand: 0.5 }, 'slipped', 'noise-band'],
    ['between, 25.6 → 24.0 ends nearer the middle', one(25.6), one(24), { ...band24to25, noiseBand: 0.5 }, 'gained', 'noise-band'],
    ['between, 24.0 → 25.0 as far from the middle as before', one(24), one(25), { ...band24to25, noiseBand: 0.5 }, 'steady', 'noise-band'],
  ] as const)('%s → %s', (_case, before, now, target, movement, reason) => {
    const r = movementOf(before, now, target)
    expect(r.movement).toBe(movement)
    expect(r.reason).toBe(reason)
    expect(r.p).toBeNull()
  })

  it.each([
    // Derived: real when |Δ| > 2·√(u₁² + u₂²); u₁ = 0.3, u₂ = 0.4 → 2·0.5 = 1.0.
    ['Δ = +1.2 > 1.0', 10, 11.2, 'gained', true],
    ['Δ = −1.2', 11.2, 10, 'slipped', true],
    ['Δ = +0.8 < 1.0', 10, 10.8, 'steady', false],
    ['Δ = 1.0 exactly: not beyond', 10, 11, 'steady', false],
  ] as const)('derived, %s → %s', (_case, before, now, movement, real) => {
    const r = movementOf({ mean: before }, { mean: now }, { comparator: 'atLeast', threshold: 12 }, { derived: true, uBefore: 0.3, uNow: 0.4 })
    expect(r.movement).toBe(movement)
    expect(r.real).toBe(real)
    expect(r.reason).toBe('uncertainty')
  })

  it('derived with a significant change inside the noise band is steady', () => {
    const r = movementOf({ mean: 10 }, { mean: 11.2 }, { comparator: 'atLeast', threshold: 12, noiseBand: 1.5 }, { derived: true, uBefore: 0.3, uNow: 0.4 })
    expect(r).toMatchObject({ movement: 'steady', real: false, reason: 'noise-band' })
  })

  it('derived without uncertainties falls back to the noise band, else not enough data', () => {
    const target = { comparator: 'atLeast', threshold: 12 } as const
    expect(movementOf({ mean: 10 }, { mean: 12 }, target, { derived: true }).reason).toBe('not-enough-data')
    expect(movementOf({ mean: 10 }, { mean: 12 }, { ...target, noiseBand: 1 }, { derived: true }).movement).toBe('gained')
  })

  it('refuses a negative noise band', () => {
    expect(() => movementOf(one(1), one(2), { comparator: 'atLeast', threshold: 1, noiseBand: -1 })).toThrow(RangeError)
  })
})
