import jStat from 'jstat'
import { all, create } from 'mathjs'
import { describe, expect, it } from 'vitest'
import {
  MAX_SAMPLES, Z_975, computeStats, pooledStats, tQuantile, welchSatterthwaite, welchTest,
} from '#shared/utils/readingStats'
import { univariate, declaredN } from '../fixtures/strd/univariate'
import { zarr13 } from '../fixtures/strd/zarr13'

/** A mathjs instance of its own: a second, independent arithmetic for the Welch examples. */
const math = create(all!, {})

/** Log relative error, the "number of correct significant digits" the StRD reports use. */
function expectSignificantDigits(actual: number, certified: number, digits: number) {
  const lre = actual === certified ? Infinity : -Math.log10(Math.abs(actual - certified) / Math.abs(certified))
  expect(lre, `${actual} vs certified ${certified}`).toBeGreaterThanOrEqual(digits)
}

function summary(values: number[]) {
  const s = computeStats(values)
  return { n: s.n, mean: s.mean, sd: s.sd! }
}

describe('mean and sd against NIST StRD univariate certified values', () => {
  // NIST/ITL StRD, Univariate Summary Statistics: certified sample mean and standard
  // deviation (tests/fixtures/strd/univariate.ts names the data source). NumAcc3 and NumAcc4
  // need 8 digits: their values (c + 0.1, c + 0.3 with c = 10⁶, 10⁷) are not exact in binary,
  // so the standard deviation of the stored doubles itself differs from 0.1 in the 9th digit.
  it.each(univariate.map(d => [d.name, d, /NumAcc[34]/.test(d.name) ? 8 : 10] as const))(
    '%s: mean and sd to the certified digits',
    (name, dataset, digits) => {
      const s = computeStats(dataset.values)
      expect(s.n).toBe(declaredN[name])
      expectSignificantDigits(s.mean, dataset.certified.mean, digits)
      expectSignificantDigits(s.sd!, dataset.certified.sd, digits)
    },
  )
})

describe('t quantile', () => {
  // NIST/SEMATECH e-Handbook 1.3.6.7.2, "Critical values of Student's t distribution with ν
  // degrees of freedom", column 0.025 (upper tail), printed to 3 decimals.
  it.each([
    [1, 12.706], [2, 4.303], [3, 3.182], [4, 2.776], [5, 2.571], [6, 2.447], [7, 2.365],
    [8, 2.306], [9, 2.262], [10, 2.228], [15, 2.131], [20, 2.086], [30, 2.042], [40, 2.021],
    [60, 2.000], [100, 1.984],
  ])('t(0.975, %i) = %s', (nu, table) => {
    expect(Math.abs(tQuantile(0.975, nu) - table)).toBeLessThanOrEqual(0.0005)
  })

  it('t(0.975, ∞) is the normal quantile 1.959963984540054', () => {
    // e-Handbook 1.3.6.7.2 last row (∞) prints 1.960. The 16-digit value is the standard normal
    // 0.975 quantile: Wikipedia, "97.5th percentile point", gives its first 20 decimals as
    // 1.95996 39845 40054 23552 (and Fisher's 1.959964). Z_975 lies within one unit in the last
    // place of a double of that value (it is one ulp below the nearest double), and jstat's
    // normal.inv agrees to 15 decimals; both checked below.
    expect(tQuantile(0.975, Infinity)).toBe(1.959963984540054)
    expect(Z_975).toBe(1.959963984540054)
    expect(Math.abs(Z_975 - Number('1.95996398454005423552'))).toBeLessThanOrEqual(Number.EPSILON)
    expect(jStat.normal.inv(0.975, 0, 1)).toBeCloseTo(Z_975, 15)
  })

  it('stays continuous and above the normal quantile for very large ν', () => {
    // Abramowitz & Stegun 26.7.5: t = z + (z³ + z)/(4ν) + O(ν⁻²).
    for (const nu of [1e4, 1e5, 1e5 + 1, 1e6, 1e9, 1e12]) {
      const t = tQuantile(0.975, nu)
      const firstOrder = Z_975 + (Z_975 ** 3 + Z_975) / (4 * nu)
      expect(t).toBeGreaterThan(Z_975)
      expect(Math.abs(t - firstOrder)).toBeLessThan(1e-7)
    }
  })

  it('refuses p outside (0, 1) and ν ≤ 0', () => {
    expect(() => tQuantile(1, 5)).toThrow(RangeError)
    expect(() => tQuantile(0.975, 0)).toThrow(RangeError)
  })
})

describe('confidence interval for the mean', () => {
  // NIST/SEMATECH e-Handbook 1.3.5.2 "Confidence Limits for the Mean", example on ZARR13.DAT
  // (heat flow meter): N = 195, mean 9.261460, sd 0.022789, t(0.975, 194) = 1.9723,
  // 95 % interval (9.258242, 9.264679). Checked to one unit in the last printed digit: the
  // printed mean 9.261460 is 9.2614608 cut to 6 decimals.
  const s = computeStats(zarr13)

  it.each([
    ['n', s.n, 195, 0],
    ['mean', s.mean, 9.261460, 6],
    ['standard deviation', s.sd!, 0.022789, 6],
    ['t(0.975, 194)', s.k!, 1.9723, 4],
    ['lower 95 % limit', s.ci95![0], 9.258242, 6],
    ['upper 95 % limit', s.ci95![1], 9.264679, 6],
  ])('%s = %s', (_name, actual, published, decimals) => {
    expect(Math.abs(actual - published)).toBeLessThanOrEqual(10 ** -decimals)
  })

  it('uses ν = n − 1 without a resolution', () => {
    expect(s.nuEff).toBe(194)
    expect(s.uB).toBeNull()
  })
})

describe('Welch two-sample t-test', () => {
  // Boost.Math documentation, "Comparing the means of two samples with the Students-t test",
  // unequal-variances output for the car mileage data of NIST/SEMATECH e-Handbook 1.3.5.3
  // (AUTO83B.DAT: US n = 249, mean 20.14458, sd 6.41470; Japan n = 79, mean 30.48101,
  // sd 6.10771): df = 136.87499, T = −12.94627, two-sided p = 1.571e−25 (the printed output of
  // Boost's example program students_t_two_samples.cpp, as its documentation shows it). The
  // e-Handbook 1.3.5.3 page itself works this example with equal variances only (T = −12.62059,
  // pooled s = 6.34260, ν = 326) and states the unequal-variance ν formula used here.
  const cars = welchTest({ n: 249, mean: 20.14458, sd: 6.41470 }, { n: 79, mean: 30.48101, sd: 6.10771 })

  it.each([
    ['t', cars.t, -12.94627, 5],
    ['df', cars.df, 136.87499, 5],
  ])('cars: %s = %s', (_name, actual, published, decimals) => {
    expect(actual).toBeCloseTo(published, decimals)
  })

  it('cars: two-sided p = 1.571e−25', () => {
    expect(cars.p / 1.571e-25).toBeCloseTo(1, 3)
  })

  // The sample sets of the worked examples of the Wikipedia article "Welch's t-test" (section
  // Examples), whose rounded t, ν and p (−2.46, 24.99, 0.021; −1.57, 9.90, 0.149) are checked
  // below. The article itself could not be consulted here; two published pages that copy these
  // sets from it confirm them: Rosetta Code, task "Welch's t-test", whose reference p-values
  // (R's t.test) are 0.021378001462867 for test set 1 (A1, A2) and 0.148841696605327 for test
  // set 2 (A3, A4), and the Azure Data Explorer reference of welch_test() ("pValue = 0.021" for
  // A1, A2). t and ν are recomputed below with mathjs (mean, unbiased variance) from Welch's
  // formulas, independently of readingStats.
  const A1 = [27.5, 21.0, 19.0, 23.6, 17.0, 17.9, 16.9, 20.1, 21.9, 22.6, 23.1, 19.6, 19.0, 21.7, 21.4]
  const A2 = [27.1, 22.0, 20.8, 23.4, 23.4, 23.5, 25.8, 22.0, 24.8, 20.2, 21.9, 22.1, 22.9, 20.5, 24.4]
  const A3 = [17.2, 20.9, 22.6, 18.1, 21.7, 21.4, 23.5, 24.2, 14.7, 21.8]
  const A4 = [21.5, 22.8, 21.0, 23.0, 21.6, 23.6, 22.5, 20.7, 23.4, 21.8, 20.7, 21.7, 21.5, 22.5, 23.6, 21.5, 22.5, 23.5, 21.5, 21.8]

  it.each([
    ['example 1', A1, A2, -2.46, 24.99, 0.021],
    ['example 2', A3, A4, -1.57, 9.90, 0.149],
  ])('Wikipedia %s: t, ν and p to the published rounding', (_name, a, b, t, df, p) => {
    const r = welchTest(summary(a), summary(b))
    expect(r.t).toBeCloseTo(t, 2)
    expect(r.df).toBeCloseTo(df, 2)
    expect(r.p).toBeCloseTo(p, 3)
  })

  it.each([
    ['test set 1', A1, A2, 0.021378001462867],
    ['test set 2', A3, A4, 0.148841696605327],
  ])('Rosetta Code %s: p equals R\'s to 9 decimals; t and ν equal mathjs\'s recomputation', (_name, a, b, pR) => {
    const r = welchTest(summary(a), summary(b))
    expect(r.p).toBeCloseTo(pR, 9)
    const va = (math.variance(...a) as number) / a.length
    const vb = (math.variance(...b) as number) / b.length
    expect(r.t).toBeCloseTo(((math.mean(a) as number) - (math.mean(b) as number)) / Math.sqrt(va + vb), 12)
    expect(r.df).toBeCloseTo((va + vb) ** 2 / (va ** 2 / (a.length - 1) + vb ** 2 / (b.length - 1)), 10)
  })

  it('is antisymmetric in its arguments and p agrees with jstat directly', () => {
    const ab = welchTest(summary(A1), summary(A2))
    const ba = welchTest(summary(A2), summary(A1))
    expect(ba.t).toBe(-ab.t)
    expect(ba.df).toBe(ab.df)
    expect(ba.p).toBe(ab.p)
    expect(ab.p).toBeCloseTo(2 * jStat.studentt.cdf(ab.t, ab.df), 12)
  })

  it('handles two samples without scatter', () => {
    expect(welchTest({ n: 3, mean: 1, sd: 0 }, { n: 3, mean: 1, sd: 0 })).toEqual({ t: 0, df: 4, p: 1 })
    expect(welchTest({ n: 3, mean: 2, sd: 0 }, { n: 3, mean: 1, sd: 0 }).p).toBe(0)
  })

  it('needs n ≥ 2 on both sides', () => {
    expect(() => welchTest({ n: 1, mean: 1, sd: 0 }, { n: 3, mean: 1, sd: 1 })).toThrow(RangeError)
  })
})

describe('Type B from resolution and Welch–Satterthwaite', () => {
  // JCGM 100:2008 (GUM) F.2.2.1: a resolution δ gives a rectangular half-width δ/2, so
  // u = δ/√12 ≈ 0.29·δ. G.4.1 eq. (G.2b): ν_eff = u_c⁴ / Σ(u_i⁴/ν_i), ν = ∞ for Type B.
  //
  // Worked by hand: x = 10.1, 10.3, 10.2, 10.4 with δ = 0.1.
  //   mean = 10.25; deviations −0.15, 0.05, −0.05, 0.15; Σd² = 0.05
  //   s² = 0.05/3;  uA² = s²/4 = 1/240;  uB² = 0.1²/12 = 1/1200
  //   u² = 1/240 + 1/1200 = 6/1200 = 1/200  →  u = √0.005 = 0.070710678…
  //   ν_eff = (1/200)² / ((1/240)²/3) = 3·240²/200² = 4.32 (used unrounded)
  //   k = t(0.975, 4.32): between the table's t(4) = 2.776 and t(5) = 2.571
  //   ci95 = 10.25 ± k·0.070710678
  const s = computeStats([10.1, 10.3, 10.2, 10.4], 0.1)

  it.each([
    ['mean', s.mean, 10.25],
    ['uA', s.uA!, Math.sqrt(1 / 240)],
    ['uB', s.uB!, 0.1 / Math.sqrt(12)],
    ['u', s.u!, Math.sqrt(0.005)],
    ['ν_eff', s.nuEff!, 4.32],
  ])('%s = %s', (_name, actual, expected) => {
    expect(actual).toBeCloseTo(expected, 12)
  })

  it('k lies between the tabled t(0.975, 4) and t(0.975, 5) and sets the interval', () => {
    expect(s.k!).toBeLessThan(2.776)
    expect(s.k!).toBeGreaterThan(2.571)
    expect(s.k!).toBeCloseTo(jStat.studentt.inv(0.975, 4.32), 12)
    expect(s.ci95![0]).toBeCloseTo(10.25 - s.k! * Math.sqrt(0.005), 12)
    expect(s.ci95![1]).toBeCloseTo(10.25 + s.k! * Math.sqrt(0.005), 12)
  })

  it('GUM F.2.2.1: u = 0.29·δ to the two digits printed there', () => {
    expect(computeStats([5], 1).uB!).toBeCloseTo(0.29, 2)
  })

  it('welchSatterthwaite reproduces the hand case and ignores infinite-ν components', () => {
    expect(welchSatterthwaite([{ u: Math.sqrt(1 / 240), nu: 3 }, { u: Math.sqrt(1 / 1200), nu: Infinity }])).toBeCloseTo(4.32, 12)
    expect(welchSatterthwaite([{ u: 1, nu: Infinity }])).toBe(Infinity)
  })
})

describe('edge cases of docs/computation.md §Statistics of a reading', () => {
  it('n = 1 without resolution: no uncertainty, no interval', () => {
    expect(computeStats([4.2])).toEqual({
      n: 1, mean: 4.2, sd: null, uA: null, uB: null, u: null, nuEff: null, k: null, ci95: null,
    })
  })

  it('n = 1 with resolution: u = uB, ν = ∞, k = 1.959963984540054', () => {
    const s = computeStats([4.2], 0.01)
    expect(s.uA).toBeNull()
    expect(s.u).toBe(0.01 / Math.sqrt(12))
    expect(s.nuEff).toBe(Infinity)
    expect(s.k).toBe(Z_975)
    expect(s.ci95).toEqual([4.2 - Z_975 * s.u!, 4.2 + Z_975 * s.u!])
  })

  it('all samples equal without resolution: u = 0 and the interval collapses to the mean', () => {
    const s = computeStats([7, 7, 7, 7])
    expect(s.sd).toBe(0)
    expect(s.u).toBe(0)
    expect(s.nuEff).toBe(3)
    expect(s.ci95).toEqual([7, 7])
  })

  it('all samples equal with resolution: only Type B remains, ν = ∞', () => {
    const s = computeStats([7, 7, 7], 0.5)
    expect(s.u).toBeCloseTo(0.5 / Math.sqrt(12), 15)
    expect(s.nuEff).toBe(Infinity)
  })

  it.each([0, null, undefined])('resolution %s means none: ν = n − 1', (resolution) => {
    const s = computeStats([1, 2, 3, 4, 5], resolution)
    expect(s.uB).toBeNull()
    expect(s.nuEff).toBe(4)
    // e-Handbook 1.3.6.7.2: t(0.975, 4) = 2.776.
    expect(s.k!).toBeCloseTo(2.776, 3)
  })

  it.each([
    ['no values', []],
    ['NaN', [1, Number.NaN]],
    ['Infinity', [1, Infinity]],
    ['a string', [1, '2' as unknown as number]],
    ['too many values', Array.from({ length: MAX_SAMPLES + 1 }, () => 1)],
  ])('refuses %s', (_name, values) => {
    expect(() => computeStats(values)).toThrow(RangeError)
  })

  it.each([-0.1, Number.NaN, Infinity])('refuses resolution %s', (resolution) => {
    expect(() => computeStats([1, 2], resolution)).toThrow(RangeError)
  })

  it(`accepts ${MAX_SAMPLES} values`, () => {
    expect(computeStats(Array.from({ length: MAX_SAMPLES }, (_, i) => i % 2)).n).toBe(MAX_SAMPLES)
  })
})

describe('pooledStats', () => {
  it('pools the values of several readings and uses the largest resolution', () => {
    const pooled = pooledStats([
      { values: [10.1, 10.3], resolution: 0.05 },
      { values: [10.2, 10.4], resolution: 0.1 },
      { values: [], resolution: null },
    ])
    expect(pooled).toEqual(computeStats([10.1, 10.3, 10.2, 10.4], 0.1))
  })

  it('has no resolution when none of the readings has one', () => {
    expect(pooledStats([{ values: [1, 2] }, { values: [3] }]).uB).toBeNull()
  })

  it('refuses an empty list', () => {
    expect(() => pooledStats([])).toThrow(RangeError)
  })
})
