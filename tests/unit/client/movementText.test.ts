import { describe, expect, it } from 'vitest'
import { movementLabel, movementReason } from '../../../utils/movementText'

const M = '\u2212'

describe('movementReason', () => {
  it.each([
    ['welch', true, 0.0123, 'a real change: Welch\'s test p = 0.012 < 0.05'],
    ['welch', false, 0.31, 'inside the scatter: Welch\'s test p = 0.310'],
    ['welch', true, 0.000042, 'a real change: Welch\'s test p = 0.000042 < 0.05'],
    ['noise-band', true, null, 'a real change: larger than the noise band'],
    ['noise-band', false, null, 'inside the noise band'],
    ['uncertainty', true, null, 'a real change: larger than twice the combined uncertainty'],
    ['uncertainty', false, null, 'inside the combined uncertainty'],
    ['not-enough-data', null, null, 'not enough data: fewer than 2 samples on a side and no noise band to judge by'],
    [null, true, null, 'a real change'],
    [undefined, false, null, 'no real change'],
  ] as const)('%s, real %s, p %s', (reason, real, p, text) => {
    expect(movementReason(reason, real, p)).toBe(text)
  })
})

describe('movementLabel', () => {
  it.each([
    [{ movement: 'gained', real: true, delta: 0.4, p: 0.002, reason: 'welch' }, 'km/h', 'Gained (+0.4 km/h): a real change: Welch\'s test p = 0.002 < 0.05'],
    [{ movement: 'slipped', real: false, delta: -1.25, p: null, reason: 'noise-band' }, '', `Slipped (${M}1.25): inside the noise band`],
    [{ movement: 'steady', real: false, delta: null, p: null, reason: null }, 'kg', 'Steady: no real change'],
    [{ movement: null, real: null, delta: null, p: null }, 'kg', 'First reading: nothing to compare with'],
  ] as const)('%j', (m, unit, text) => {
    expect(movementLabel(m, unit)).toBe(text)
  })
})
