import { describe, expect, it } from 'vitest'
import { currentCaution, hazardOf, projectileCaution, rimSpeedCaution } from '../../shared/utils/caution'

// The numbers are closed forms worked by hand: K = ½mv² (OpenStax University Physics Vol. 1,
// eq. 7.6), v = ωr (ibid., eq. 10.4), 1 rpm = 2π/60 rad/s (NIST SP 811 B.8 via the revolution).

describe('cautions with numbers', () => {
  it('states a projectile’s kinetic energy: ½ · 0.145 kg · (40 m/s)² = 116 J', () => {
    const c = projectileCaution(0.145, 40)!
    expect(c.value).toBeCloseTo(116, 12)
    expect(c.text).toContain('A 145 g projectile at 40 m/s carries 116 J')
    expect(c.text).toMatch(/eye protection/)
    expect(c.text).toMatch(/local codes and licensed practice/)
  })

  it('states a rim speed: 6000 rpm on a 100 mm radius is 200π/… = 62.8 m/s', () => {
    const c = rimSpeedCaution(6000 * 2 * Math.PI / 60, 0.1)!
    expect(c.value).toBeCloseTo(20 * Math.PI, 12)
    expect(c.text).toContain('62.8 m/s (226 km/h)')
    expect(c.text).toMatch(/guard/)
  })

  it('states the peak current against the pack’s limit', () => {
    expect(currentCaution(45, 40)!.text).toContain('up to 45 A, over the pack’s 40 A limit by 12.5 %')
    expect(currentCaution(30, 40)!.text).toContain('up to 30 A, 75 % of the pack’s 40 A limit')
    expect(currentCaution(30, 40)!.text).toMatch(/Fuse/)
  })

  it('says nothing without the numbers it needs', () => {
    expect(projectileCaution(0, 40)).toBeNull()
    expect(projectileCaution(Number.NaN, 40)).toBeNull()
    expect(rimSpeedCaution(0, 0.1)).toBeNull()
    expect(currentCaution(10, 0)).toBeNull()
  })

  it('names hazards only for its own quantities', () => {
    expect(hazardOf('current')).toBe('electrical')
    expect(hazardOf('constructor')).toBeNull()
    expect(hazardOf('dim:kg·m/s³')).toBeNull()
  })
})
