// Forecast of a target from the means of its latest revisions: an ordinary least-squares
// line through (revision index, mean) and the revision at which it would reach the target.
import type { Comparator } from './conformance'
import { StatsOverflowError } from './readingStats'

export interface LinearFit {
  slope: number
  intercept: number
  /** √(Σ residual² / (n − 2)); null when n = 2 (no degrees of freedom left). */
  residualSd: number | null
  n: number
}

/**
 * Least-squares line y = intercept + slope·x. The sums are taken about the means of x and y
 * so that large offsets (e.g. readings near 10⁶ with a spread of 1) lose no precision.
 */
export function linearFit(xs: readonly number[], ys: readonly number[]): LinearFit {
  const n = xs.length
  if (ys.length !== n) throw new RangeError('linearFit: xs and ys differ in length')
  if (n < 2) throw new RangeError('linearFit: at least 2 points are needed')
  if (![...xs, ...ys].every(Number.isFinite)) throw new RangeError('linearFit: values must be finite')

  const xBar = mean(xs)
  const yBar = mean(ys)
  let sxx = 0
  let sxy = 0
  for (let i = 0; i < n; i++) {
    const dx = xs[i]! - xBar
    sxx += dx * dx
    sxy += dx * (ys[i]! - yBar)
  }
  if (sxx === 0) throw new RangeError('linearFit: all x are equal, the slope is undefined')

  const slope = sxy / sxx
  const intercept = yBar - slope * xBar
  if (![xBar, yBar, sxx, sxy, slope, intercept].every(Number.isFinite)) throw new StatsOverflowError('the fitted line')
  let rss = 0
  for (let i = 0; i < n; i++) {
    // Residual written about the means, same reason as above.
    const r = (ys[i]! - yBar) - slope * (xs[i]! - xBar)
    rss += r * r
  }
  const residualSd = n > 2 ? Math.sqrt(rss / (n - 2)) : null
  return { slope, intercept, residualSd, n }
}

function mean(values: readonly number[]): number {
  // Two passes: the first estimate, then the mean of the deviations from it.
  let sum = 0
  for (const v of values) sum += v
  const first = sum / values.length
  let correction = 0
  for (const v of values) correction += v - first
  return first + correction / values.length
}

export interface ForecastPoint {
  /** Position of the revision in the build's order (R1 → 0 or 1, …); any increasing scale. */
  index: number
  label: string
  mean: number
}

export interface ForecastTarget {
  comparator: Comparator
  threshold: number
  thresholdHigh?: number | null
}

export type ForecastStatus = 'already-met' | 'converging' | 'not-converging' | 'not-enough-data'

export interface Forecast {
  /** Points the line was fitted to. */
  n: number
  slope: number | null
  intercept: number | null
  /** Fractional index where the line reaches the threshold (the nearer edge for `between`). */
  crossesAt: number | null
  /** Revisions after the last one until the line meets the target, rounded up (≥ 1). */
  crossesAfterLast: number | null
  status: ForecastStatus
  /** Fitted values at the used points, then one point at the crossing or 3 revisions ahead. */
  line: { index: number, value: number }[]
}

export const FORECAST_MIN_POINTS = 3
const DEFAULT_WINDOW = 5
const EXTEND_WITHOUT_CROSSING = 3

export function forecast(
  points: readonly ForecastPoint[],
  target: ForecastTarget,
  opts: { window?: number } = {},
): Forecast {
  const window = Math.max(FORECAST_MIN_POINTS, Math.floor(opts.window ?? DEFAULT_WINDOW))
  const { low, high } = band(target)
  const used = points
    .filter(p => Number.isFinite(p.index) && Number.isFinite(p.mean))
    .sort((a, b) => a.index - b.index)
    .slice(-window)
  const none: Forecast = {
    n: used.length, slope: null, intercept: null, crossesAt: null, crossesAfterLast: null,
    status: 'not-enough-data', line: [],
  }
  if (used.length < FORECAST_MIN_POINTS) return none
  const xs = used.map(p => p.index)
  if (xs[0] === xs[xs.length - 1]) return none

  let fit: LinearFit
  try {
    fit = linearFit(xs, used.map(p => p.mean))
  }
  catch (e) {
    // means too far apart for a line in double precision: no forecast, as with too few points
    if (e instanceof StatsOverflowError) return none
    throw e
  }
  const { slope, intercept } = fit
  const at = (x: number) => intercept + slope * x
  const last = used[used.length - 1]!
  const lastIndex = last.index
  const line = used.map(p => ({ index: p.index, value: at(p.index) }))
  const result = (status: ForecastStatus, crossesAt: number | null = null): Forecast => {
    const crossesAfterLast = crossesAt === null
      ? null
      : Math.max(1, Math.ceil(crossesAt - lastIndex - 1e-9))
    const end = crossesAt === null
      ? lastIndex + EXTEND_WITHOUT_CROSSING
      : Math.max(crossesAt, lastIndex + 1)
    return {
      n: used.length, slope, intercept, crossesAt, crossesAfterLast, status,
      line: [...line, { index: end, value: at(end) }],
    }
  }

  if (last.mean >= low && last.mean <= high) return result('already-met')

  // A slope indistinguishable from zero at the scale of the data is flat.
  const scale = Math.max(...used.map(p => Math.abs(p.mean)))
  if (Math.abs(slope) * (lastIndex - xs[0]!) <= 1e-12 * scale) return result('not-converging')

  // Below the band the line has to rise to `low`; above it, fall to `high`.
  const edge = last.mean < low ? (slope > 0 ? low : null) : (slope < 0 ? high : null)
  if (edge === null) return result('not-converging')
  const crossing = (edge - intercept) / slope
  // The fitted line may already be past the edge at the last point while the last mean is not:
  // then the next revision is the first one the line says will meet it.
  return result('converging', Math.max(crossing, lastIndex))
}

function band(target: ForecastTarget): { low: number, high: number } {
  const { comparator, threshold, thresholdHigh } = target
  if (!Number.isFinite(threshold)) throw new RangeError('forecast: the threshold must be a finite number')
  if (comparator === 'atLeast') return { low: threshold, high: Infinity }
  if (comparator === 'atMost') return { low: -Infinity, high: threshold }
  if (thresholdHigh == null || !Number.isFinite(thresholdHigh) || thresholdHigh < threshold) {
    throw new RangeError('forecast: a between target needs thresholdHigh ≥ threshold')
  }
  return { low: threshold, high: thresholdHigh }
}

export interface ForecastView {
  status: ForecastStatus
  /** points the line went through */
  n: number
  /** change per revision, in the unit of the means */
  slope: number | null
  /** Revisions after the last point until the line meets the target (≥ 1), as forecast() gives it. */
  crossesAfterLast: number | null
  /**
   * The revision at which the line meets the target: an existing label, or the label the next
   * ones would get when labels end in a number (R5 → R7); otherwise "2 after R5".
   */
  crossesAt: string | null
  /** The fitted line at build positions (0 = the build's first revision), extended ahead. */
  line: { index: number, value: number }[]
  /** what the forecast is worth, in words: "a straight line through 4 points" */
  caveat: string
}

/** The label of the revision at build position `index`, guessing labels past the last one. */
export function labelAt(revisions: readonly string[], index: number): string | null {
  if (!Number.isInteger(index) || index < 0) return null
  if (index < revisions.length) return revisions[index]!
  const last = revisions.at(-1)
  if (last === undefined) return null
  const ahead = index - (revisions.length - 1)
  const m = /^(.*?)(\d+)$/.exec(last)
  if (!m) return `${ahead} after ${last}`
  const next = String(Number(m[2]) + ahead)
  return m[1] + (m[2]!.startsWith('0') ? next.padStart(m[2]!.length, '0') : next)
}

/**
 * The forecast of a target from its history (one mean per revision that has one, any order),
 * placed on the build's revisions (`revisions`: every label, oldest first).
 */
export function forecastOfHistory(
  history: readonly { revision: string, mean: number }[],
  revisions: readonly string[],
  target: ForecastTarget,
  opts: { window?: number } = {},
): ForecastView {
  const position = new Map(revisions.map((r, i) => [r, i]))
  const points = history
    .filter(h => position.has(h.revision))
    .map(h => ({ index: position.get(h.revision)!, label: h.revision, mean: h.mean }))
  const f = forecast(points, target, opts)
  const lastIndex = f.n > 0 ? Math.max(...points.map(p => p.index)) : null
  const at = f.crossesAfterLast !== null && lastIndex !== null ? labelAt(revisions, lastIndex + f.crossesAfterLast) : null
  return {
    status: f.status,
    n: f.n,
    slope: f.slope,
    crossesAfterLast: f.crossesAfterLast,
    crossesAt: at,
    line: f.line,
    caveat: f.status === 'not-enough-data'
      ? `needs a mean on at least ${FORECAST_MIN_POINTS} revisions (${f.n === 1 ? 'has 1' : `has ${f.n}`})`
      : `a straight line through ${f.n} points`,
  }
}
