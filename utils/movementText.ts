import type { Comparator, Movement } from '#shared/utils/conformance'
import { formatNumber, formatSigned } from './measureFormat'

export const MOVEMENT_WORDS: Record<Movement, string> = {
  gained: 'Gained',
  slipped: 'Slipped',
  steady: 'Steady',
}

/** What a movement means for the target, without a comparator: the plain words above. */
export interface MovementFacts {
  movement: Movement | null
  real: boolean | null
  delta: number | null
  p: number | null
  reason?: string | null
}

/** Welch's test found a change the target's noise band then overruled: significant, yet smaller than the band. */
export function withinNoiseBand(m: Pick<MovementFacts, 'real' | 'p' | 'reason'>): boolean {
  return m.reason === 'noise-band' && !m.real && m.p != null && m.p < 0.05
}

/**
 * The movement in one or a few words. A `between` target gains by coming closer to its band
 * (the mean may go down), so it says so; a significant change that the noise band overrules is
 * "within the noise band", not a bare "Steady".
 */
export function movementWord(m: Pick<MovementFacts, 'movement' | 'real' | 'p' | 'reason'>, comparator?: Comparator | null): string {
  if (!m.movement) return 'First value'
  if (m.movement === 'steady') return withinNoiseBand(m) ? 'Within the noise band' : MOVEMENT_WORDS.steady
  if (comparator === 'between') return m.movement === 'gained' ? 'Closer to the band' : 'Further from the band'
  return MOVEMENT_WORDS[m.movement]
}

/** Why a movement is (or is not) real, in words. */
export function movementReason(reason: string | null | undefined, real: boolean | null, p: number | null | undefined): string {
  const pText = p != null ? `p = ${formatNumber(p, p < 0.001 ? undefined : 3)}` : ''
  switch (reason) {
    case 'welch': return real ? `a real change: Welch's test ${pText} < 0.05` : `inside the scatter: Welch's test ${pText}`
    case 'noise-band':
      if (real) return 'a real change: larger than the noise band'
      if (p != null && p < 0.05) return `real (Welch's test ${pText} < 0.05) but smaller than the noise band`
      return 'inside the noise band'
    case 'uncertainty': return real ? 'a real change: larger than twice the combined uncertainty' : 'inside the combined uncertainty'
    case 'not-enough-data': return 'not enough data: fewer than 2 samples on a side and no noise band to judge by'
    default: return real ? 'a real change' : 'no real change'
  }
}

/** "Gained (+0.4 km/h): a real change: …", or the first reading's note. */
export function movementLabel(m: MovementFacts, unit = '', comparator?: Comparator | null): string {
  if (!m.movement) return 'First reading: nothing to compare with'
  const delta = m.delta != null ? ` (${formatSigned(m.delta)}${unit ? ` ${unit}` : ''})` : ''
  return `${movementWord(m, comparator)}${delta}: ${movementReason(m.reason, m.real, m.p)}`
}
