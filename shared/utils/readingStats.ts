// Statistics of a reading as the product pins them: mean, sample standard deviation, Type A
// and Type B standard uncertainties, their combination, the Welch–Satterthwaite effective
// degrees of freedom and the 95 % interval for the mean; and Welch's test between readings.

import jStat from 'jstat'

export interface ReadingStats {
  n: number
  mean: number
  /** Sample standard deviation (denominator n − 1); null when n = 1. */
  sd: number | null
  /** Type A standard uncertainty sd/√n; null when n = 1. */
  uA: number | null
  /** Type B standard uncertainty from the resolution, δ/√12; null without a resolution. */
  uB: number | null
  /** Combined standard uncertainty √(uA² + uB²); null when neither exists. */
  u: number | null
  /** Effective degrees of freedom; Infinity when only Type B remains (or uA = 0). */
  nuEff: number | null
  /** Coverage factor t(0.975, ν_eff). */
  k: number | null
  ci95: [number, number] | null
}

export const MAX_SAMPLES = 10_000

/**
 * Values whose statistics leave double precision (a square, a sum or a difference past ±1.8e308):
 * finite inputs, but no finite mean, spread, interval or test. Callers answer it as bad input.
 */
export class StatsOverflowError extends RangeError {
  override name = 'StatsOverflowError'
  constructor(what = 'the statistics') {
    super(`The values are too large or too far apart for double precision: ${what} would overflow`)
  }
}

const allFinite = (...xs: (number | null | undefined)[]) => xs.every(x => x == null || Number.isFinite(x))

/** Two-sided 95 % normal quantile, the limit of t(0.975, ν) as ν → ∞. */
export const Z_975 = 1.959963984540054

// Above this, jstat's inverse loses accuracy (it drifts by 10⁻³ at ν = 10⁹); the
// Cornish–Fisher expansion below is exact to double precision there.
const LARGE_NU = 1e5

/** Quantile of Student's t with ν (real, > 0) degrees of freedom; ν = Infinity gives the normal. */
export function tQuantile(p: number, nu: number): number {
  if (!(p > 0 && p < 1)) throw new RangeError('tQuantile: p must lie strictly between 0 and 1')
  if (!(nu > 0)) throw new RangeError('tQuantile: degrees of freedom must be positive')
  if (p === 0.975 && nu === Infinity) return Z_975
  const z = p === 0.975 ? Z_975 : jStat.normal.inv(p, 0, 1)
  if (nu === Infinity) return z
  if (nu <= LARGE_NU) return jStat.studentt.inv(p, nu)
  // Abramowitz & Stegun 26.7.5, four terms.
  const g1 = (z ** 3 + z) / 4
  const g2 = (5 * z ** 5 + 16 * z ** 3 + 3 * z) / 96
  const g3 = (3 * z ** 7 + 19 * z ** 5 + 17 * z ** 3 - 15 * z) / 384
  const g4 = (79 * z ** 9 + 776 * z ** 7 + 1482 * z ** 5 - 1920 * z ** 3 - 945 * z) / 92160
  return z + g1 / nu + g2 / nu ** 2 + g3 / nu ** 3 + g4 / nu ** 4
}

/**
 * Welch–Satterthwaite (GUM G.4.1): ν_eff = u⁴ / Σ(uᵢ⁴/νᵢ), u² = Σuᵢ². Components with
 * infinite ν contribute nothing to the denominator; if all do (or all uᵢ with finite ν are 0),
 * ν_eff is Infinity.
 */
export function welchSatterthwaite(components: readonly { u: number, nu: number }[]): number {
  let scale = 0
  for (const { u, nu } of components) {
    if (!(u >= 0) || !(nu > 0)) throw new RangeError('welchSatterthwaite: u must be ≥ 0 and ν > 0')
    if (u === Infinity) throw new StatsOverflowError('the effective degrees of freedom')
    scale = Math.max(scale, u)
  }
  // ν_eff is unchanged when every uᵢ is divided by one factor: dividing by the largest keeps
  // uᵢ⁴ from overflowing (or vanishing) for any finite uᵢ
  let u2 = 0
  let denominator = 0
  for (const { u, nu } of components) {
    const r = scale > 0 ? u / scale : 0
    u2 += r * r
    if (Number.isFinite(nu)) denominator += (r * r) ** 2 / nu
  }
  return denominator === 0 ? Infinity : (u2 * u2) / denominator
}

function checkValues(values: readonly number[]): void {
  if (!Array.isArray(values) || values.length < 1) throw new RangeError('A reading needs at least one value')
  if (values.length > MAX_SAMPLES) throw new RangeError(`A reading holds at most ${MAX_SAMPLES} values`)
  values.forEach((v, i) => {
    if (typeof v !== 'number' || !Number.isFinite(v)) {
      throw new RangeError(`Value ${i + 1} is not a finite number`)
    }
  })
}

function checkResolution(resolution: number | null | undefined): number {
  if (resolution == null) return 0
  if (typeof resolution !== 'number' || !Number.isFinite(resolution) || resolution < 0) {
    throw new RangeError('The resolution must be a finite number ≥ 0')
  }
  return resolution
}

/**
 * Mean and sum of squared deviations, numerically stable: the mean is taken as a first
 * estimate corrected by the mean residual, and the squared deviations carry the same
 * correction (the "corrected two-pass" algorithm), so a large common offset costs no digits.
 */
function meanAndSS(values: readonly number[]): { mean: number, ss: number } {
  const n = values.length
  const shift = values[0]!
  let sum = 0
  for (const v of values) sum += v - shift
  let mean = shift + sum / n
  let sd1 = 0
  let sd2 = 0
  for (const v of values) {
    const d = v - mean
    sd1 += d
    sd2 += d * d
  }
  mean += sd1 / n
  return { mean, ss: Math.max(0, sd2 - (sd1 * sd1) / n) }
}

/**
 * Statistics of one reading. `resolution` is the instrument resolution δ in the same unit as
 * the values; 0 or null means none.
 */
export function computeStats(values: readonly number[], resolution?: number | null): ReadingStats {
  checkValues(values)
  const delta = checkResolution(resolution)
  const n = values.length
  const { mean, ss } = meanAndSS(values)

  const sd = n > 1 ? Math.sqrt(ss / (n - 1)) : null
  const uA = sd === null ? null : sd / Math.sqrt(n)
  // GUM F.2.2.1: a reading known only to the resolution δ lies in ±δ/2, rectangular.
  const uB = delta > 0 ? delta / Math.sqrt(12) : null
  if (!allFinite(mean, sd, uA)) throw new StatsOverflowError('the mean and standard deviation')

  if (uA === null && uB === null) {
    return { n, mean, sd, uA, uB, u: null, nuEff: null, k: null, ci95: null }
  }
  const u = Math.sqrt((uA ?? 0) ** 2 + (uB ?? 0) ** 2)
  if (!Number.isFinite(u)) throw new StatsOverflowError('the combined standard uncertainty')
  let nuEff: number
  if (uA === null) nuEff = Infinity
  else if (uB === null) nuEff = n - 1
  else nuEff = welchSatterthwaite([{ u: uA, nu: n - 1 }, { u: uB, nu: Infinity }])
  const k = tQuantile(0.975, nuEff)
  const half = k * u
  const ci95: [number, number] = [mean - half, mean + half]
  if (!allFinite(...ci95)) throw new StatsOverflowError('the 95 % interval')
  return { n, mean, sd, uA, uB, u, nuEff, k, ci95 }
}

export interface SampleSummary {
  n: number
  mean: number
  sd: number
}

/**
 * Welch's two-sample t-test of a against b: t = (mean_a − mean_b)/√(s_a²/n_a + s_b²/n_b),
 * Welch–Satterthwaite degrees of freedom, two-sided p. Both sides need n ≥ 2. When both
 * standard deviations are 0 the test degenerates: equal means give t = 0, p = 1, otherwise
 * t = ±Infinity, p = 0; df is then n_a + n_b − 2.
 */
export function welchTest(a: SampleSummary, b: SampleSummary): { t: number, df: number, p: number } {
  for (const [name, s] of [['first', a], ['second', b]] as const) {
    if (!Number.isInteger(s.n) || s.n < 2) throw new RangeError(`welchTest: the ${name} sample needs n ≥ 2`)
    if (!Number.isFinite(s.mean) || !Number.isFinite(s.sd) || s.sd < 0) {
      throw new RangeError(`welchTest: the ${name} sample needs a finite mean and sd ≥ 0`)
    }
  }
  const va = (a.sd * a.sd) / a.n
  const vb = (b.sd * b.sd) / b.n
  const diff = a.mean - b.mean
  if (!allFinite(va, vb, va + vb, diff)) throw new StatsOverflowError('Welch’s test between the readings')
  if (va + vb === 0) {
    const df = a.n + b.n - 2
    return diff === 0 ? { t: 0, df, p: 1 } : { t: diff > 0 ? Infinity : -Infinity, df, p: 0 }
  }
  const t = diff / Math.sqrt(va + vb)
  const df = welchSatterthwaite([{ u: Math.sqrt(va), nu: a.n - 1 }, { u: Math.sqrt(vb), nu: b.n - 1 }])
  const p = Math.min(1, 2 * jStat.studentt.cdf(-Math.abs(t), df))
  return { t, df, p }
}

/**
 * Several readings of one target on one revision pooled into one sample set: the values are
 * concatenated and treated as one reading. The resolution used is the largest among the
 * readings (the coarsest instrument bounds them all); readings without one add none.
 * Values must already be in one unit.
 */
export function pooledStats(readings: readonly { values: readonly number[], resolution?: number | null }[]): ReadingStats {
  if (readings.length === 0) throw new RangeError('pooledStats: no readings to pool')
  const values: number[] = []
  let resolution = 0
  for (const r of readings) {
    values.push(...r.values)
    resolution = Math.max(resolution, checkResolution(r.resolution))
  }
  return computeStats(values, resolution)
}

/**
 * A stated result: one value with its standard uncertainty u and, optionally, its effective
 * degrees of freedom ν (null: infinite, the uncertainty is taken as known). Its 95 % interval is
 * value ± t(0.975, ν)·u (GUM 6.2.1, 6.3.3 and G.3.2); sd, uA and uB do not apply (null).
 */
export function statedStats(value: number, u: number, dof?: number | null): ReadingStats {
  if (typeof value !== 'number' || !Number.isFinite(value)) throw new RangeError('The value is not a finite number')
  if (typeof u !== 'number' || !Number.isFinite(u) || u < 0) throw new RangeError('The standard uncertainty must be a finite number ≥ 0')
  if (dof != null && !(typeof dof === 'number' && dof > 0 && Number.isFinite(dof))) {
    throw new RangeError('The degrees of freedom must be a finite number > 0, or none (infinite)')
  }
  const nuEff = dof ?? Infinity
  const k = tQuantile(0.975, nuEff)
  const half = k * u
  const ci95: [number, number] = [value - half, value + half]
  if (!allFinite(half, ...ci95)) throw new StatsOverflowError('the 95 % interval')
  return { n: 1, mean: value, sd: null, uA: null, uB: null, u, nuEff, k, ci95 }
}

/** One independent estimate of the measurand: its value x, standard uncertainty u (null: none) and ν. */
export interface ResultEstimate {
  x: number
  u: number | null
  /** Infinity when the uncertainty is known exactly */
  nu: number
}

export interface CombinedEstimate {
  mean: number
  u: number | null
  nuEff: number | null
  k: number | null
  ci95: [number, number] | null
}

/** Plain mean of some values, with the first as a shift so a large common offset costs no digits. */
function plainMean(xs: readonly number[]): number {
  const shift = xs[0]!
  let sum = 0
  for (const x of xs) sum += x - shift
  const mean = shift + sum / xs.length
  if (!Number.isFinite(mean)) throw new StatsOverflowError('the mean of the results')
  return mean
}

/**
 * Independent estimates of one quantity combined by inverse-variance weighting: wᵢ = 1/uᵢ²,
 * x̄ = Σwᵢxᵢ/Σwᵢ, u(x̄) = (Σwᵢ)^(−1/2). x̄ is a linear function of the xᵢ with sensitivity
 * coefficients wᵢ/Σwᵢ, so by GUM 5.1.2 (eq. 10) each contributes cᵢ = u(x̄)²/uᵢ, and ν_eff is
 * Welch–Satterthwaite over those contributions (GUM G.4.1); the interval is x̄ ± t(0.975, ν_eff)·u(x̄).
 * Edge cases: results with u = 0 are exact and outweigh all others (x̄ is their plain mean,
 * u = 0, ν infinite); when any result has no uncertainty at all (u null) nothing can be weighted,
 * so x̄ is the plain mean of the results and there is no interval.
 */
export function combineResults(results: readonly ResultEstimate[]): CombinedEstimate {
  if (results.length === 0) throw new RangeError('combineResults: no results to combine')
  for (const r of results) {
    if (!Number.isFinite(r.x)) throw new RangeError('combineResults: every value must be finite')
    if (r.u !== null && !(r.u >= 0 && Number.isFinite(r.u))) throw new RangeError('combineResults: u must be finite and ≥ 0')
    if (!(r.nu > 0)) throw new RangeError('combineResults: ν must be > 0')
  }
  if (results.some(r => r.u === null)) {
    return { mean: plainMean(results.map(r => r.x)), u: null, nuEff: null, k: null, ci95: null }
  }
  const exact = results.filter(r => r.u === 0)
  if (exact.length > 0) {
    const mean = plainMean(exact.map(r => r.x))
    return { mean, u: 0, nuEff: Infinity, k: Z_975, ci95: [mean, mean] }
  }
  // weights relative to the smallest u, so 1/u² neither overflows nor vanishes: w'ᵢ = (s/uᵢ)² ∈ (0, 1]
  const s = Math.min(...results.map(r => r.u!))
  const w = results.map(r => (s / r.u!) ** 2)
  const W = w.reduce((a, b) => a + b, 0)
  const shift = results[0]!.x
  let sum = 0
  results.forEach((r, i) => { sum += w[i]! * (r.x - shift) })
  const mean = shift + sum / W
  if (!Number.isFinite(mean)) throw new StatsOverflowError('the weighted mean of the results')
  const u = s / Math.sqrt(W)
  // contributions u(x̄)²/uᵢ, scaled by 1/u(x̄) (ν_eff does not change with a common factor)
  const nuEff = welchSatterthwaite(results.map(r => ({ u: u / r.u!, nu: r.nu })))
  const k = tQuantile(0.975, nuEff)
  const half = k * u
  const ci95: [number, number] = [mean - half, mean + half]
  if (!allFinite(half, ...ci95)) throw new StatsOverflowError('the 95 % interval')
  return { mean, u, nuEff, k, ci95 }
}

/** Two-sided p of Student's t with ν degrees of freedom (ν = Infinity: the normal). */
export function twoSidedP(t: number, nu: number): number {
  if (Number.isNaN(t) || !(nu > 0)) throw new RangeError('twoSidedP: t must be a number and ν > 0')
  if (!Number.isFinite(t)) return 0
  const tail = Number.isFinite(nu) && nu <= LARGE_NU ? jStat.studentt.cdf(-Math.abs(t), nu) : jStat.normal.cdf(-Math.abs(t), 0, 1)
  return Math.min(1, 2 * tail)
}

/**
 * Welch's test generalised to results with a stated uncertainty: t = Δ/√(u₁² + u₂²), ν by
 * Welch–Satterthwaite from (u₁, ν₁) and (u₂, ν₂) (GUM G.4.1), two-sided p from Student's t.
 * With u₁ = u₂ = 0: equal values give p = 1, different ones p = 0 (ν infinite).
 */
export function statedTest(a: { mean: number, u: number, nu: number }, b: { mean: number, u: number, nu: number }): { t: number, df: number, p: number } {
  for (const s of [a, b]) {
    if (!Number.isFinite(s.mean) || !(s.u >= 0) || !Number.isFinite(s.u) || !(s.nu > 0)) {
      throw new RangeError('statedTest: each side needs a finite mean, a finite u ≥ 0 and ν > 0')
    }
  }
  const diff = a.mean - b.mean
  if (!Number.isFinite(diff)) throw new StatsOverflowError('the test between the results')
  const scale = Math.max(a.u, b.u)
  if (scale === 0) return diff === 0 ? { t: 0, df: Infinity, p: 1 } : { t: diff > 0 ? Infinity : -Infinity, df: Infinity, p: 0 }
  const u = scale * Math.sqrt((a.u / scale) ** 2 + (b.u / scale) ** 2)
  const t = diff / u
  if (!Number.isFinite(t)) throw new StatsOverflowError('the test between the results')
  const df = welchSatterthwaite([{ u: a.u, nu: a.nu }, { u: b.u, nu: b.nu }])
  return { t, df, p: twoSidedP(t, df) }
}
