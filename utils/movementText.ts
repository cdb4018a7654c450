import type { Movement } from '#shared/utils/conformance'
import { formatNumber, formatSigned } from './measureFormat'

export const MOVEMENT_WORDS: Record<Movement, string> = {
  gained: 'Gained',
  slipped: 'Slipped',
  steady: 'Steady',
}

/** Why a movement is (or is not) real, in words. */
export function movementReason(reason: string | null | undefined, real: boolean | null, p: number | null | undefined): string {
  const pText = p != null ? `p = ${formatNumber(p, p < 0.001 ? undefined : 3)}` : ''
  switch (reason) {
    case 'welch': return real ? `a real change: Welch's test ${pText} < 0.05` : `inside the scatter: Welch's test ${pText}`
    case 'noise-band': return real ? 'a real change: larger than the noise band' : 'inside the noise band'
    case 'uncertainty': return real ? 'a real change: larger than twice the combined uncertainty' : 'inside the combined uncertainty'
    case 'not-enough-data': return 'not enough data: fewer than 2 samples on a side and no noise band to judge by'
    default: return real ? 'a real change' : 'no real change'
  }
}

/** "Gained (+0.4 km/h): a real change: …", or the first reading's note. */
export function movementLabel(m: { movement: Movement | null, real: boolean | null, delta: number | null, p: number | null, reason?: string | null }, unit = ''): string {
  if (!m.movement) return 'First reading: nothing to compare with'
  const delta = m.delta != null ? ` (${formatSigned(m.delta)}${unit ? ` ${unit}` : ''})` : ''
  return `${MOVEMENT_WORDS[m.movement]}${delta}: ${movementReason(m.reason, m.real, m.p)}`
}
