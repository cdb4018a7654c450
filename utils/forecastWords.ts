import type { ForecastView } from '#shared/utils/forecast'
import { formatNumber } from './measureFormat'

/** The forecast in a few words, without its caveat. */
export function forecastWords(f: ForecastView): string {
  switch (f.status) {
    case 'converging': return f.crossesAt ? `meets it at ${f.crossesAt}` : `meets it ${f.crossesAfterLast} revisions on`
    case 'not-converging': return 'not converging'
    case 'already-met': return 'latest mean on the good side'
    default: return 'not enough revisions yet'
  }
}

/** What the forecast needs of its target to say which line it crosses. */
export interface CrossingTarget {
  comparator: 'atLeast' | 'atMost' | 'between'
  threshold: number
  thresholdHigh?: number | null
  unit: string
}

/**
 * The value the forecast line heads for: the threshold, or for a band the bound it approaches
 * (a rising line meets the low bound, a falling one the high bound).
 */
export function crossingValue(f: Pick<ForecastView, 'slope'>, t: CrossingTarget): number {
  if (t.comparator !== 'between' || t.thresholdHigh == null) return t.threshold
  return (f.slope ?? 0) < 0 ? t.thresholdHigh : t.threshold
}

/**
 * Where the forecast line crosses, for the chart and its note: "crosses 25 km/h at ≈R7". The "≈"
 * because a straight line through a few means is a rough guide. Null when the line doesn't
 * converge.
 */
export function forecastCrossing(f: ForecastView, t: CrossingTarget): string | null {
  if (f.status !== 'converging') return null
  const where = f.crossesAt ? `at ≈${f.crossesAt}` : f.crossesAfterLast != null ? `≈${f.crossesAfterLast} revisions on` : null
  if (!where) return null
  return `crosses ${formatNumber(crossingValue(f, t))} ${t.unit} ${where}`.replace(/ {2,}/g, ' ')
}

/**
 * A revision's label under the history chart's axis: "R3", with the day it was built beneath
 * ("12 Mar") when the chart has room for dates and the revision has one. Revisions the forecast
 * reaches past the last one have no date.
 */
export function axisLabel(label: string, builtOn: string | null | undefined, withDates: boolean): string | string[] {
  if (!label || !withDates || !builtOn) return label
  const d = new Date(builtOn)
  if (Number.isNaN(d.getTime())) return label
  return [label, d.toLocaleDateString('en-GB', { day: 'numeric', month: 'short', timeZone: 'UTC' })]
}
