// Decisions about a target: its status against the threshold (a guarded acceptance rule:
// the 95 % interval, not the bare mean, has to clear the threshold), the margin to it, and
// whether a change between two revisions is real and in which direction.

import { StatsOverflowError, statedTest, welchTest } from './readingStats'

export type TargetStatus = 'met' | 'marginal' | 'short' | 'untested'
export type Movement = 'gained' | 'slipped' | 'steady'
export type Comparator = 'atLeast' | 'atMost' | 'between'

export interface TargetRule {
  comparator: Comparator
  threshold: number
  /** Upper edge of the band; required for `between`. */
  thresholdHigh?: number | null
}

export interface MovementTarget extends TargetRule {
  /** Smallest change that matters, in the same unit as the means; null or 0 for none. */
  noiseBand?: number | null
}

/** The target's band as [low, high]; open sides are infinite. */
function bandOf(target: TargetRule): [number, number] {
  const { comparator, threshold, thresholdHigh } = target
  if (!Number.isFinite(threshold)) throw new RangeError('The threshold must be a finite number')
  switch (comparator) {
    case 'atLeast': return [threshold, Infinity]
    case 'atMost': return [-Infinity, threshold]
    case 'between':
      if (thresholdHigh == null || !Number.isFinite(thresholdHigh) || thresholdHigh < threshold) {
        throw new RangeError('A between target needs an upper threshold ≥ the lower one')
      }
      return [threshold, thresholdHigh]
    default:
      throw new RangeError(`Unknown comparator "${String(comparator)}"`)
  }
}

/**
 * Met when the whole 95 % interval lies on the good side of the threshold (touching it
 * counts), Short when the whole interval lies on the bad side, Marginal when it straddles.
 * Without an interval (one sample, no resolution) the mean alone decides Met or Short.
 * For `between` the good side is the band [threshold, thresholdHigh].
 */
export function statusOf(
  stats: { mean: number, ci95: [number, number] | null } | null,
  target: TargetRule,
): TargetStatus {
  const [low, high] = bandOf(target)
  if (stats === null) return 'untested'
  if (stats.ci95 === null) return stats.mean >= low && stats.mean <= high ? 'met' : 'short'
  const [lo, hi] = stats.ci95
  if (lo >= low && hi <= high) return 'met'
  if (hi < low || lo > high) return 'short'
  return 'marginal'
}

/**
 * Signed distance from the mean to the threshold in percent of the threshold, positive on
 * the good side. For `between`: to the nearer edge (outside: the edge crossed), positive
 * inside the band. Null when that threshold is 0, where a percentage has no meaning.
 * The percentage depends on the zero of the scale, so pass values in the target's display unit.
 */
export function marginOf(mean: number, target: TargetRule): number | null {
  const [low, high] = bandOf(target)
  let edge: number
  let signed: number
  if (target.comparator === 'atLeast') {
    edge = low
    signed = mean - low
  }
  else if (target.comparator === 'atMost') {
    edge = high
    signed = high - mean
  }
  else if (mean < low) {
    edge = low
    signed = mean - low
  }
  else if (mean > high) {
    edge = high
    signed = high - mean
  }
  else if (mean - low <= high - mean) {
    edge = low
    signed = mean - low
  }
  else {
    edge = high
    signed = high - mean
  }
  return edge === 0 ? null : (signed / Math.abs(edge)) * 100
}

export interface MovementSide {
  mean: number
  n?: number | null
  sd?: number | null
  /** combined standard uncertainty (used when a side holds stated results) */
  u?: number | null
  /** its effective degrees of freedom; null or absent with a u: infinite */
  nuEff?: number | null
  /** how many stated results the side pools; 0 or absent: samples only */
  stated?: number | null
}

export interface MovementResult {
  /** mean_now − mean_before. */
  delta: number
  /** Two-sided p of Welch's test when it was run. */
  p: number | null
  movement: Movement
  real: boolean
  /** The rule that decided. 'noise-band' also when a significant change fell inside the band. */
  reason: 'welch' | 'noise-band' | 'uncertainty' | 'not-enough-data'
}

export const SIGNIFICANCE = 0.05

/**
 * Movement between the previous revision with a reading (`before`) and this one (`now`).
 * - Derived targets with both uncertainties: real when |Δ| > 2·√(u₁² + u₂²).
 * - Either side holds a stated result, both with a u: Welch's test generalised to stated
 *   uncertainties, t = Δ/√(u₁² + u₂²), ν by Welch–Satterthwaite, real when p < 0.05.
 * - n ≥ 2 on both sides: Welch's test, real when p < 0.05.
 * - Otherwise, with a noise band: real when |Δ| exceeds it; without one: steady, not enough data.
 * A noise band also vetoes a significant change smaller than the band ("inside the noise band").
 * Direction: atLeast up is good, atMost down is good, between closer to the band's midpoint is good.
 */
export function movementOf(
  before: MovementSide,
  now: MovementSide,
  target: MovementTarget,
  opts: { derived?: boolean, uBefore?: number | null, uNow?: number | null } = {},
): MovementResult {
  const [low, high] = bandOf(target)
  if (!Number.isFinite(before.mean) || !Number.isFinite(now.mean)) {
    throw new RangeError('movementOf: both means must be finite numbers')
  }
  const band = target.noiseBand ?? 0
  if (!Number.isFinite(band) || band < 0) throw new RangeError('The noise band must be a finite number ≥ 0')

  const delta = now.mean - before.mean
  if (!Number.isFinite(delta)) throw new StatsOverflowError('the change between the revisions')
  const size = Math.abs(delta)
  let p: number | null = null
  let real: boolean
  let reason: MovementResult['reason']

  const u1 = opts.uBefore
  const u2 = opts.uNow
  const hasU = (u: number | null | undefined): u is number => typeof u === 'number' && Number.isFinite(u) && u >= 0
  const sampled = (s: MovementSide) => (s.n ?? 0) >= 2 && typeof s.sd === 'number' && Number.isFinite(s.sd)

  if (opts.derived && hasU(u1) && hasU(u2)) {
    real = size > 2 * Math.sqrt(u1 * u1 + u2 * u2)
    reason = 'uncertainty'
  }
  else if (!opts.derived && ((before.stated ?? 0) > 0 || (now.stated ?? 0) > 0)) {
    const bu = before.u
    const nu = now.u
    if (hasU(bu) && hasU(nu)) {
      p = statedTest(
        { mean: now.mean, u: nu, nu: now.nuEff ?? Infinity },
        { mean: before.mean, u: bu, nu: before.nuEff ?? Infinity },
      ).p
      real = p < SIGNIFICANCE
      reason = 'welch'
    }
    else if (band > 0) {
      real = size > band
      reason = 'noise-band'
    }
    else {
      real = false
      reason = 'not-enough-data'
    }
  }
  else if (!opts.derived && sampled(before) && sampled(now)) {
    p = welchTest(
      { n: now.n!, mean: now.mean, sd: now.sd! },
      { n: before.n!, mean: before.mean, sd: before.sd! },
    ).p
    real = p < SIGNIFICANCE
    reason = 'welch'
  }
  else if (band > 0) {
    real = size > band
    reason = 'noise-band'
  }
  else {
    real = false
    reason = 'not-enough-data'
  }
  if (real && band > 0 && size < band) {
    real = false
    reason = 'noise-band'
  }

  let movement: Movement = 'steady'
  if (real) {
    let good: boolean | null
    if (target.comparator === 'atLeast') good = delta > 0
    else if (target.comparator === 'atMost') good = delta < 0
    else {
      const mid = (low + high) / 2
      const closer = Math.abs(now.mean - mid) - Math.abs(before.mean - mid)
      good = closer < 0 ? true : closer > 0 ? false : null
    }
    if (good === null) real = false
    else movement = good ? 'gained' : 'slipped'
  }
  return { delta, p, movement, real, reason }
}
