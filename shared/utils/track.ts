// Speed from positions marked on frames of footage: the least-squares line x = a + b·t through
// the points, its slope b the speed, the slope's standard error its standard uncertainty with
// ν = n − 2 degrees of freedom (NIST/SEMATECH e-Handbook 4.1.4.1 and 4.1.4.2; the rules in
// docs/computation.md §Track readings). And the part of that uncertainty that the pixel grid alone
// sets, so the measuring screen can show whether more frames or a closer camera would help.

import { StatsOverflowError } from './readingStats'

export const MIN_TRACK_POINTS = 3
export const MAX_TRACK_POINTS = 10_000

export interface TrackPoint {
  t: number
  x: number
}

export interface TrackFit {
  n: number
  /** The slope b (x units per t unit): the speed. */
  slope: number
  intercept: number
  /** Standard error of the slope, √(s²/Sₜₜ) with s² = SSE/(n − 2). */
  u: number
  /** Degrees of freedom of u: n − 2. */
  nu: number
  /** Residual standard deviation s. */
  s: number
  /** x − (a + b·t) at each point, in the order given. */
  residuals: number[]
}

/** Why a set of points can't give a slope: too few, or no spread in time. */
export class TrackError extends Error {
  override name = 'TrackError'
}

/**
 * The least-squares line through the points. Sums are taken about the means (two passes), so a
 * clock that starts at 10⁶ s loses no digits of the slope. Throws TrackError for fewer than three
 * points or points all at one time, StatsOverflowError when the sums leave double precision.
 */
export function fitTrack(points: readonly TrackPoint[]): TrackFit {
  const n = points.length
  if (n < MIN_TRACK_POINTS) throw new TrackError(`A track needs at least ${MIN_TRACK_POINTS} points to give a speed and its uncertainty; it has ${n}`)
  let tMean = 0
  let xMean = 0
  for (const p of points) {
    tMean += p.t / n
    xMean += p.x / n
  }
  let stt = 0
  let stx = 0
  for (const p of points) {
    const dt = p.t - tMean
    stt += dt * dt
    stx += dt * (p.x - xMean)
  }
  if (!Number.isFinite(stt) || !Number.isFinite(stx) || !Number.isFinite(xMean)) throw new StatsOverflowError('the line through the points')
  if (!(stt > 0)) throw new TrackError('The points must be at more than one time: all of them are at the same time')
  const slope = stx / stt
  const intercept = xMean - slope * tMean
  const residuals = points.map(p => p.x - xMean - slope * (p.t - tMean))
  let sse = 0
  for (const r of residuals) sse += r * r
  const nu = n - 2
  const s = Math.sqrt(sse / nu)
  const u = s / Math.sqrt(stt)
  if (![slope, intercept, u].every(Number.isFinite)) throw new StatsOverflowError('the line through the points')
  return { n, slope, intercept, u, nu, s, residuals }
}

/**
 * What the pixel grid alone contributes to u(speed), in speed units. Each marked position is good
 * to ±½ px and each end of the scale bar likewise, rectangular (GUM 4.3.7: u = a/√3), so
 * - a position has u(x) = (L/d)·(½)/√3 and the slope takes u(x)/√Sₜₜ of it (the slope's standard
 *   error with σ = u(x), e-Handbook 4.1.4.2);
 * - the scale's length in pixels, d, has u(d) = √2·(½)/√3 px (two ends), and the speed scales with
 *   L/d, so it adds |speed|·u(d)/d (GUM 5.1.6, relative uncertainties of a product).
 * `scale` is the length of the scale object (in the track's length unit) and `scalePx` its length in
 * pixels; `times` the marked frames' times.
 */
export function pixelBudget(input: { times: readonly number[], scale: number, scalePx: number, speed: number }): { position: number, scale: number, total: number } {
  const { times, scale, scalePx, speed } = input
  const n = times.length
  if (n < 2 || !(scalePx > 0) || !(scale > 0)) return { position: Number.NaN, scale: Number.NaN, total: Number.NaN }
  const tMean = times.reduce((a, t) => a + t, 0) / n
  const stt = times.reduce((a, t) => a + (t - tMean) ** 2, 0)
  const halfPx = 0.5 / Math.sqrt(3)
  const position = (scale / scalePx) * halfPx / Math.sqrt(stt)
  const scalePart = Math.abs(speed) * (Math.SQRT2 * halfPx) / scalePx
  return { position, scale: scalePart, total: Math.hypot(position, scalePart) }
}
