import type { Comparator } from '#shared/utils/conformance'
import { formatNumber } from './measureFormat'

export const COMPARATOR_LABELS: Record<Comparator, string> = {
  atLeast: 'at least',
  atMost: 'at most',
  between: 'between',
}

export interface ThresholdRule { comparator: Comparator, threshold: number, thresholdHigh?: number | null, unit: string }

/** "≥ 40 N·m", "≤ 4.2 kg", "24–25 km/h". */
export function thresholdText(t: ThresholdRule): string {
  if (t.comparator === 'between') return `${formatNumber(t.threshold)}–${formatNumber(t.thresholdHigh)} ${t.unit}`
  return `${t.comparator === 'atLeast' ? '≥' : '≤'} ${formatNumber(t.threshold)} ${t.unit}`
}

/** The same in words, for screen readers and titles. */
export function thresholdWords(t: ThresholdRule): string {
  if (t.comparator === 'between') return `between ${formatNumber(t.threshold)} and ${formatNumber(t.thresholdHigh)} ${t.unit}`
  return `${COMPARATOR_LABELS[t.comparator]} ${formatNumber(t.threshold)} ${t.unit}`
}
