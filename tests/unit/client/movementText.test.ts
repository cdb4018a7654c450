import { describe, expect, it } from 'vitest'
import { movementLabel, movementReason, movementWord, withinNoiseBand } from '../../../utils/movementText'

const M = '\u2212'

describe('movementReason', () => {
  it.each([
    ['welch', true, 0.0123, 'a real change: Welch\'s test p = 0.012 < 0.05'],
    ['welch', false, 0.31, 'inside the scatter: Welch\'s test p = 0.310'],
    ['welch', true, 0.000042, 'a real change: Welch\'s test p = 0.000042 < 0.05'],
    ['noise-band', true, null, 'a real change: larger than the noise band'],
    ['noise-band', false, null, 'inside the noise band'],
    // Welch's test said real, the noise band overruled it (conformance.movementOf): say both
    ['noise-band', false, 0.008, 'real (Welch\'s test p = 0.008 < 0.05) but smaller than the noise band'],
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

describe('movementWord', () => {
  it.each([
    [{ movement: 'gained', real: true, p: 0.01, reason: 'welch' }, 'atLeast', 'Gained'],
    [{ movement: 'slipped', real: true, p: 0.01, reason: 'welch' }, 'atMost', 'Slipped'],
    // a between target: a drop into the band is a gain, and says where it went
    [{ movement: 'gained', real: true, p: 0.01, reason: 'welch' }, 'between', 'Closer to the band'],
    [{ movement: 'slipped', real: true, p: 0.01, reason: 'welch' }, 'between', 'Further from the band'],
    [{ movement: 'steady', real: false, p: 0.008, reason: 'noise-band' }, 'atLeast', 'Within the noise band'],
    [{ movement: 'steady', real: false, p: 0.2, reason: 'welch' }, 'atLeast', 'Steady'],
    [{ movement: 'steady', real: false, p: null, reason: 'noise-band' }, null, 'Steady'],
    [{ movement: null, real: null, p: null, reason: null }, null, 'First value'],
  ] as const)('%j on %s', (m, comparator, word) => {
    expect(movementWord(m, comparator)).toBe(word)
  })

  it('tells a significant change the band overruled from one the test found inside the scatter', () => {
    expect(withinNoiseBand({ real: false, p: 0.008, reason: 'noise-band' })).toBe(true)
    expect(withinNoiseBand({ real: false, p: 0.05, reason: 'noise-band' })).toBe(false)
    expect(withinNoiseBand({ real: true, p: 0.008, reason: 'noise-band' })).toBe(false)
    expect(withinNoiseBand({ real: false, p: 0.008, reason: 'welch' })).toBe(false)
  })
})

describe('movementLabel with the comparator', () => {
  it('says a drop into a between band came closer to the band, not "Gained"', () => {
    expect(movementLabel({ movement: 'gained', real: true, delta: -1.551, p: 0.001, reason: 'welch' }, 'km/h', 'between'))
      .toBe(`Closer to the band (${M}1.551 km/h): a real change: Welch's test p = 0.001 < 0.05`)
  })
  it('says a significant change smaller than the noise band is real but within it', () => {
    expect(movementLabel({ movement: 'steady', real: false, delta: 0.2, p: 0.008, reason: 'noise-band' }, 'N·m', 'atLeast'))
      .toBe('Within the noise band (+0.2 N·m): real (Welch\'s test p = 0.008 < 0.05) but smaller than the noise band')
  })
})
