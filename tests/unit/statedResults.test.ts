import jStat from 'jstat'
import { all, create } from 'mathjs'
import { describe, expect, it } from 'vitest'
import { fieldErrors } from '#shared/utils/accountSchemas'
import { decideCells, poolCell, type SiRule } from '#shared/utils/cellStats'
import { movementOf } from '#shared/utils/conformance'
import { ReadingBody, isStatedBody } from '#shared/utils/readingSchemas'
import { StatsOverflowError, Z_975, combineResults, pooledStats, statedStats, statedTest, twoSidedP, welchSatterthwaite } from '#shared/utils/readingStats'

/** A mathjs instance of its own: a second, independent arithmetic for the weighted mean. */
const math = create(all!, {})

// NIST/SEMATECH e-Handbook of Statistical Methods, 1.3.6.7.2 "Critical values of Student's t
// distribution with ν degrees of freedom", upper-tail column 0.025, printed to 3 decimals (the
// same table tests/unit/readingStats.test.ts checks tQuantile against; ∞ is the table's last row).
const NIST_T975: [number, number][] = [[1, 12.706], [2, 4.303], [4, 2.776], [5, 2.571], [10, 2.228], [20, 2.086], [30, 2.042], [Infinity, 1.960]]

describe('a stated result: value ± t(0.975, ν)·u (GUM 6.2.1, 6.3.3, G.3.2)', () => {
  it.each(NIST_T975)('ν = %s: the half-width is u times the table’s t = %s', (nu, t) => {
    const u = 0.5
    const s = statedStats(20, u, Number.isFinite(nu) ? nu : null)
    expect(s.n).toBe(1)
    expect(s.mean).toBe(20)
    expect(s.u).toBe(u)
    expect(s.nuEff).toBe(nu)
    expect([s.sd, s.uA, s.uB]).toEqual([null, null, null])
    const half = s.ci95![1] - s.mean
    expect(Math.abs(half / u - t)).toBeLessThanOrEqual(0.0005 + 1e-12)
    expect(s.mean - s.ci95![0]).toBeCloseTo(half, 12)
  })

  it('agrees with jstat’s Student t quantile for real ν, and uses the normal quantile without ν', () => {
    // jstat (a general-purpose statistics library): studentt.inv(p, ν)
    for (const nu of [1.5, 3, 7.25, 12, 48.6]) {
      expect(statedStats(0, 1, nu).k).toBeCloseTo(jStat.studentt.inv(0.975, nu), 12)
    }
    expect(statedStats(0, 1).k).toBe(Z_975)
    expect(statedStats(0, 1, null).nuEff).toBe(Infinity)
  })

  it('u = 0 is an exact result: a zero-width interval', () => {
    expect(statedStats(3, 0, 4).ci95).toEqual([3, 3])
  })

  it('refuses u < 0, a non-finite u, and ν ≤ 0', () => {
    expect(() => statedStats(1, -0.1)).toThrow(RangeError)
    expect(() => statedStats(1, Number.NaN)).toThrow(RangeError)
    expect(() => statedStats(1, Infinity)).toThrow(RangeError)
    expect(() => statedStats(1, 1, 0)).toThrow(RangeError)
    expect(() => statedStats(1.7e308, 1e308)).toThrow(StatsOverflowError)
  })
})

describe('combining independent results by inverse-variance weighting', () => {
  it('reproduces a textbook weighted average: 11 ± 1, 12 ± 1, 10 ± 3 → 11.4 ± 0.7', () => {
    // J. R. Taylor, An Introduction to Error Analysis, 2nd ed. (1997), §7.2, the example of three
    // measurements of one resistance (ohms), printed as 11.4 ± 0.7. Recalled from memory, not
    // re-read; the exact fractions below do not depend on that recollection.
    const c = combineResults([{ x: 11, u: 1, nu: Infinity }, { x: 12, u: 1, nu: Infinity }, { x: 10, u: 3, nu: Infinity }])
    expect(c.mean).toBeCloseTo(11.4, 1)
    expect(c.u!).toBeCloseTo(0.7, 1)
    // by hand: weights 1, 1, 1/9 → x̄ = (11 + 12 + 10/9)/(19/9) = 217/19, u = (19/9)^(-1/2) = 3/√19
    expect(c.mean).toBeCloseTo(217 / 19, 13)
    expect(c.u!).toBeCloseTo(3 / Math.sqrt(19), 14)
    expect(c.nuEff).toBe(Infinity)
    expect(c.k).toBe(Z_975)
  })

  it('is the generalised least-squares estimate of a constant, as mathjs computes it', () => {
    // GLS with design A = 1 (a column of ones) and covariance V = diag(uᵢ²):
    // β = (AᵀV⁻¹A)⁻¹ AᵀV⁻¹y, u(β)² = (AᵀV⁻¹A)⁻¹, evaluated with mathjs matrices.
    const results = [{ x: 101.3, u: 0.42, nu: 9 }, { x: 100.8, u: 0.25, nu: 4 }, { x: 101.05, u: 0.6, nu: Infinity }, { x: 100.95, u: 0.33, nu: 30 }]
    const A = math.ones(results.length, 1)
    const Vinv = math.diag(results.map(r => 1 / r.u ** 2))
    const y = math.matrix(results.map(r => [r.x]))
    const AtVinv = math.multiply(math.transpose(A), Vinv)
    const cov = math.inv(math.multiply(AtVinv, A))
    const beta = math.multiply(cov, math.multiply(AtVinv, y))
    const c = combineResults(results)
    expect(c.mean).toBeCloseTo(Number(math.subset(beta, math.index(0, 0))), 11)
    expect(c.u!).toBeCloseTo(Math.sqrt(Number(math.subset(cov, math.index(0, 0)))), 13)
    // ν_eff: Welch–Satterthwaite (GUM G.4.1, eq. G.2b) over the contributions cᵢ = u(x̄)²/uᵢ,
    // the sensitivity coefficient wᵢ/Σw times uᵢ (GUM 5.1.3), in mathjs arithmetic
    const u2 = c.u! ** 2
    const contributions = results.map(r => u2 / r.u)
    const num = math.pow(math.sum(contributions.map(ci => ci ** 2)), 2) as number
    const den = math.sum(results.map((r, i) => (Number.isFinite(r.nu) ? contributions[i]! ** 4 / r.nu : 0)))
    expect(c.nuEff!).toBeCloseTo(num / den, 9)
    expect(c.k!).toBeCloseTo(jStat.studentt.inv(0.975, num / den), 10)
    expect(c.ci95![1] - c.mean).toBeCloseTo(c.k! * c.u!, 12)
  })

  it('weights stay finite for very small or very large u (scaled by the smallest)', () => {
    const tiny = combineResults([{ x: 1, u: 1e-200, nu: Infinity }, { x: 2, u: 1e-200, nu: Infinity }])
    expect(tiny.mean).toBeCloseTo(1.5, 14)
    expect(tiny.u! / 1e-200).toBeCloseTo(Math.SQRT1_2, 12)
    const huge = combineResults([{ x: 1, u: 1e200, nu: 3 }, { x: 3, u: 1e200, nu: 3 }])
    expect(huge.mean).toBe(2)
    expect(huge.nuEff).toBeCloseTo(6, 10)
  })

  it('exact results (u = 0) outweigh the others; a result without u leaves only the plain mean', () => {
    expect(combineResults([{ x: 5, u: 0, nu: Infinity }, { x: 9, u: 1, nu: 3 }])).toEqual({ mean: 5, u: 0, nuEff: Infinity, k: Z_975, ci95: [5, 5] })
    expect(combineResults([{ x: 4, u: null, nu: Infinity }, { x: 8, u: 1, nu: 3 }])).toEqual({ mean: 6, u: null, nuEff: null, k: null, ci95: null })
  })

  it('overflow is a StatsOverflowError', () => {
    expect(() => combineResults([{ x: -1.7e308, u: 1, nu: Infinity }, { x: 1.7e308, u: 1, nu: Infinity }])).toThrow(StatsOverflowError)
  })
})

describe('poolCell with stated results', () => {
  it('samples only: exactly as before (values concatenated)', () => {
    const readings = [{ values: [1, 2, 3], resolution: 0.1 }, { values: [4, 5], resolution: null }]
    const s = pooledStats(readings)
    expect(poolCell(readings)).toEqual({ readings: 2, n: 5, mean: s.mean, sd: s.sd, uA: s.uA, uB: s.uB, u: s.u, nuEff: s.nuEff, ciLow: s.ci95![0], ciHigh: s.ci95![1] })
  })

  it('a samples set and a stated result: the samples pooled into one result, then weighted', () => {
    const samples = [{ values: [10.1, 10.4, 9.9, 10.2], resolution: null }, { values: [10.3, 10.0], resolution: null }]
    const s = pooledStats(samples)
    const cell = poolCell([...samples, { values: [10.6], resolution: null, u: 0.1, dof: 8 }])
    const expected = combineResults([{ x: s.mean, u: s.u, nu: s.nuEff! }, { x: 10.6, u: 0.1, nu: 8 }])
    expect(cell).toEqual({
      readings: 3, n: 7, mean: expected.mean, sd: null, uA: null, uB: null, u: expected.u, nuEff: expected.nuEff,
      ciLow: expected.ci95![0], ciHigh: expected.ci95![1], stated: 1,
    })
    // the hand formula for two results: x̄ = (x₁/u₁² + x₂/u₂²)/(1/u₁² + 1/u₂²)
    const w1 = 1 / s.u! ** 2
    const w2 = 1 / 0.01
    expect(cell.mean).toBeCloseTo((s.mean * w1 + 10.6 * w2) / (w1 + w2), 12)
    expect(cell.u!).toBeCloseTo(1 / Math.sqrt(w1 + w2), 12)
  })

  it('one sample without resolution cannot be weighted: plain mean of the results, no interval', () => {
    const cell = poolCell([{ values: [4], resolution: null }, { values: [6], resolution: null, u: 0.2, dof: null }])
    expect(cell).toMatchObject({ n: 2, mean: 5, u: null, nuEff: null, ciLow: null, ciHigh: null, stated: 1 })
  })

  it('decides the status from the combined interval', () => {
    const rule: SiRule = { comparator: 'atLeast', threshold: 10, thresholdHigh: null, noiseBand: null }
    const met = poolCell([{ values: [10.5], resolution: null, u: 0.1, dof: null }])
    const marginal = poolCell([{ values: [10.1], resolution: null, u: 0.1, dof: null }])
    expect(decideCells([met], rule)[0]!.status).toBe('met')
    expect(decideCells([marginal], rule)[0]!.status).toBe('marginal')
  })
})

describe('movement with stated results: Welch’s test generalised to (u, ν)', () => {
  const atLeast = { comparator: 'atLeast' as const, threshold: 0 }

  it('at the NIST table’s critical t the two-sided p is 0.05', () => {
    // u₁ = u₂ = 1, ν₁ = ν₂ = 5: ν = (1 + 1)²/(1/5 + 1/5) = 10 (GUM G.4.1), t(0.975, 10) = 2.228 (e-Handbook 1.3.6.7.2)
    const r = statedTest({ mean: 2.228 * Math.SQRT2, u: 1, nu: 5 }, { mean: 0, u: 1, nu: 5 })
    expect(r.df).toBeCloseTo(10, 12)
    expect(r.p).toBeCloseTo(0.05, 3)
    // ν infinite: the normal; 1.960 is the table's last row
    expect(statedTest({ mean: 1.96 * Math.SQRT2, u: 1, nu: Infinity }, { mean: 0, u: 1, nu: Infinity }).p).toBeCloseTo(0.05, 3)
    expect(twoSidedP(2.571, 5)).toBeCloseTo(0.05, 3)
  })

  it('decides real movement with reason welch when either cell holds a stated result', () => {
    const before = { mean: 10, n: 1, sd: null, u: 0.1, nuEff: Infinity, stated: 1 }
    const far = movementOf(before, { mean: 10.5, n: 5, sd: null, u: 0.1, nuEff: 4, stated: 0 }, atLeast)
    expect(far).toMatchObject({ real: true, movement: 'gained', reason: 'welch' })
    expect(far.p!).toBeCloseTo(statedTest({ mean: 10.5, u: 0.1, nu: 4 }, { mean: 10, u: 0.1, nu: Infinity }).p, 14)
    const near = movementOf(before, { mean: 10.1, n: 1, sd: null, u: 0.1, nuEff: null, stated: 1 }, atLeast)
    expect(near).toMatchObject({ real: false, movement: 'steady', reason: 'welch' })
    expect(near.p!).toBeCloseTo(2 * jStat.normal.cdf(-0.1 / Math.sqrt(0.02), 0, 1), 12)
  })

  it('falls back to the noise band when a side has no uncertainty', () => {
    const before = { mean: 10, n: 2, sd: null, u: null, nuEff: null, stated: 1 }
    const now = { mean: 12, n: 1, sd: null, u: 0.1, nuEff: null, stated: 1 }
    expect(movementOf(before, now, { ...atLeast, noiseBand: 1 })).toMatchObject({ reason: 'noise-band', real: true })
    expect(movementOf(before, now, atLeast)).toMatchObject({ reason: 'not-enough-data', real: false })
  })

  it('pure sample cells keep Welch’s test on n and sd', () => {
    const a = poolCell([{ values: [1, 2, 3, 4], resolution: null }])
    const b = poolCell([{ values: [5, 6, 7, 8], resolution: null }])
    const d = decideCells([a, b], { comparator: 'atLeast', threshold: 0, thresholdHigh: null, noiseBand: null })[1]!
    expect(d.reason).toBe('welch')
    expect(d.p!).toBeLessThan(0.01)
    expect(welchSatterthwaite([{ u: a.uA!, nu: 3 }, { u: b.uA!, nu: 3 }])).toBeCloseTo(6, 12)
  })
})

describe('the reading body', () => {
  const base = { revision: 'R1', target: 'mass', unit: 'g' }
  it('takes samples or a stated result, and says which', () => {
    const samples = ReadingBody.parse({ ...base, values: [1, 2] })
    const stated = ReadingBody.parse({ ...base, value: 3, u: 0.2, dof: 5 })
    expect(isStatedBody(samples)).toBe(false)
    expect(isStatedBody(stated)).toBe(true)
    expect(ReadingBody.parse({ ...base, value: 3, u: 0 })).toMatchObject({ value: 3, u: 0 })
  })

  it('refuses both kinds at once, u < 0, u not a number and dof ≤ 0, with a message naming the field', () => {
    const errors = (x: unknown) => {
      const r = ReadingBody.safeParse(x)
      expect(r.success).toBe(false)
      return fieldErrors(r.error!)
    }
    expect(errors({ ...base, values: [1], value: 1, u: 1 })._).toMatch(/either values .* or value with u .* not both/)
    expect(errors({ ...base, value: 1, u: -1 }).u).toMatch(/u is 0 or more/)
    expect(errors({ ...base, value: 1, u: '0.1' }).u).toMatch(/finite number/)
    expect(errors({ ...base, value: 1 }).u).toMatch(/finite number/)
    expect(errors({ ...base, value: 1, u: 1, dof: 0 }).dof).toMatch(/more than 0/)
    // samples keep their field paths (API v1 answers name values.1 as before)
    expect(errors({ ...base, values: [1, 'x'] })).toEqual({ 'values.1': expect.stringMatching(/finite number/) })
    expect(Object.keys(errors({ ...base }))).toEqual(['values'])
  })
})
