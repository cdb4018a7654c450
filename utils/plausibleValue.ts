import { formatNumber } from './measureFormat'

/**
 * How far a number may stray before Ratchet asks whether it was meant. People write a value in a
 * unit whose prefix keeps the number small: NIST SP 811 (2008) §7.9 advises choosing the prefix
 * so the number lies between 0.1 and 1000 (recalled from memory). The bounds here leave six
 * decades of slack above that and eight below (common practice, no source for the slack): beyond them a
 * value is far more often a typo or the wrong unit than a measurement. A warning, never a refusal.
 */
export const USUAL_MAX = 1e9
export const USUAL_MIN = 1e-9

/** A warning for a value far outside what is usually written in `unit`, or null. */
export function implausibleValue(value: number | null | undefined, unit: string): string | null {
  if (value == null || !Number.isFinite(value) || value === 0) return null
  const size = Math.abs(value)
  if (size < USUAL_MAX && size > USUAL_MIN) return null
  const where = unit.trim() ? ` ${unit.trim()}` : ''
  const way = size >= USUAL_MAX ? 'large' : 'small'
  return `${formatNumber(value)}${where} is unusually ${way} for this unit: check the value and the unit. It can still be saved.`
}
