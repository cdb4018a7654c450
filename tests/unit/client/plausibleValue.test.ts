import { describe, expect, it } from 'vitest'
import { implausibleValue, USUAL_MAX, USUAL_MIN } from '../../../utils/plausibleValue'

// NIST SP 811 (2008) §7.9 advises a prefix that keeps the number between 0.1 and 1000 (recalled
// from memory); the warning bounds 1e−9 … 1e9 add slack to that (common practice, no source).
describe('implausibleValue', () => {
  it('warns on a threshold many decades beyond what a unit is written with', () => {
    expect(implausibleValue(1e23, 'km/h')).toBe('1e+23 km/h is unusually large for this unit: check the value and the unit. It can still be saved.')
    expect(implausibleValue(-2e12, 'N·m')).toMatch(/^−2000000000000 N·m is unusually large/)
    expect(implausibleValue(3e-12, 'm')).toMatch(/^3e-12 m is unusually small/)
  })

  it('takes the numbers people write, zero, and the bounds themselves in silence', () => {
    for (const v of [25, 0.1, 1000, 0.004, 65000, 0, -40, 2.4e8]) expect(implausibleValue(v, 'km/h')).toBeNull()
    expect(implausibleValue(USUAL_MAX * 0.999, 'Pa')).toBeNull()
    expect(implausibleValue(USUAL_MIN * 1.001, 'Pa')).toBeNull()
    expect(implausibleValue(USUAL_MAX, 'Pa')).not.toBeNull()
    expect(implausibleValue(USUAL_MIN, 'Pa')).not.toBeNull()
  })

  it('leaves what is no number to the form\'s own check', () => {
    expect(implausibleValue(null, 'kg')).toBeNull()
    expect(implausibleValue(Number.NaN, 'kg')).toBeNull()
    expect(implausibleValue(Infinity, 'kg')).toBeNull()
  })
})
