import { describe, expect, it } from 'vitest'
import { currentCaution, hazardOf, projectileCaution, rimSpeedCaution } from '#shared/utils/caution'
import { designCautions, type CautionTarget } from '#shared/utils/designCautions'

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

// designCautions picks the parameters by quantity and by words in their key or name (Ratchet's
// rule). The numbers are worked by hand from the same closed forms:
//   3600 rpm = 120π rad/s = 376.991 rad/s; × 60 mm = 22.6195 m/s (81.43 km/h)
//   ½ · 0.058 kg · (22.6195 m/s)² = 14.838 J
//   3541 rpm = 370.816 rad/s; × 60 mm = 22.249 m/s
describe('cautions with numbers from a target and its build’s parameters', () => {
  const launcher = [
    { key: 'motor_speed', name: 'Motor speed set-point', value: 3600, unit: 'rpm' },
    { key: 'wheel_radius', name: 'Wheel radius', value: 60, unit: 'mm' },
    { key: 'ball_mass', name: 'Ball mass', value: 58, unit: 'g' },
    { key: 'pack_fuse', name: 'Pack fuse rating', value: 40, unit: 'A' },
    { key: 'wheel_material', name: 'Wheel material', value: 'rubber tread', unit: null },
  ]
  const target = (over: Partial<CautionTarget>): CautionTarget => ({
    quantity: 'velocity', unit: 'm/s', comparator: 'atLeast', threshold: 20, thresholdHigh: null, stretch: null, model: null, modelKeys: [], ...over,
  })

  it('a launcher’s exit speed: the ball’s kinetic energy at the highest speed, and the rim speed of its model', () => {
    const out = designCautions({
      target: target({ stretch: 22, model: 'motor_speed * wheel_radius', modelKeys: ['motor_speed', 'wheel_radius'] }),
      parameters: launcher,
      measured: { value: 18.1, revision: 'R3' },
      predicted: { value: 22.619467, revision: 'R3' },
    })
    expect(out.map(c => c.unit)).toEqual(['J', 'm/s'])
    expect(out[0]!.value).toBeCloseTo(0.5 * 0.058 * 22.619467 ** 2, 9)
    expect(out[0]!.value).toBeCloseTo(14.838, 3)
    expect(out[0]!.text).toContain('A 58 g projectile at 22.6 m/s carries 14.8 J')
    expect(out[0]!.basis).toBe('From ball_mass = 58 g and 22.62 m/s (the model’s prediction on R3); K = ½mv².')
    expect(out[1]!.value).toBeCloseTo(22.619467, 5)
    expect(out[1]!.text).toContain('The rim moves at 22.6 m/s (81.4 km/h)')
    expect(out[1]!.basis).toBe('From motor_speed = 3,600 rpm and wheel_radius = 60 mm in the model; v = ωr.')
  })

  it('takes the stretch goal when it is the highest speed, and no projectile without a projectile’s mass', () => {
    const [ke] = designCautions({ target: target({ stretch: 25 }), parameters: launcher, measured: { value: 18.1, revision: 'R3' }, predicted: null })
    expect(ke!.value).toBeCloseTo(0.5 * 0.058 * 625, 12)
    expect(ke!.basis).toContain('25 m/s (the stretch goal)')
    const cart = [{ key: 'unit_mass', name: 'Drive-unit mass', value: 4.2, unit: 'kg' }]
    expect(designCautions({ target: target({}), parameters: cart, measured: { value: 7, revision: 'R1' }, predicted: null })).toEqual([])
  })

  it('an angular speed with a radius or a diameter parameter: the rim speed', () => {
    const wheel = designCautions({ target: target({ quantity: 'angularSpeed', unit: 'rpm', threshold: 3400 }), parameters: launcher, measured: { value: 3541, revision: 'R3' }, predicted: null })
    expect(wheel).toHaveLength(1)
    expect(wheel[0]!.value).toBeCloseTo(3541 * 2 * Math.PI / 60 * 0.06, 9)
    expect(wheel[0]!.text).toContain('22.2 m/s (80.1 km/h)')
    const disc = designCautions({
      target: target({ quantity: 'angularSpeed', unit: 'rpm', threshold: 6000 }),
      parameters: [{ key: 'blade_diameter', name: 'Blade diameter', value: 200, unit: 'mm' }],
      measured: null,
      predicted: null,
    })
    // 6000 rpm = 200π rad/s on a 100 mm radius: 20π = 62.83 m/s
    expect(disc[0]!.value).toBeCloseTo(20 * Math.PI, 9)
  })

  it('a peak current against the pack’s limit, never against a controller’s setting', () => {
    const current = (measured: number | null) => designCautions({
      target: target({ quantity: 'current', unit: 'A', comparator: 'atMost', threshold: 35 }),
      parameters: [...launcher, { key: 'controller_current_limit', name: 'Controller current limit', value: 30, unit: 'A' }],
      measured: measured === null ? null : { value: measured, revision: 'R3' },
      predicted: null,
    })
    expect(current(33)[0]!.text).toContain('up to 33 A, 82.5 % of the pack’s 40 A limit')
    // an at-most threshold is a cap, not what the loads draw: only without a reading
    expect(current(null)[0]!.basis).toContain('35 A (the threshold (no reading yet))')
    expect(designCautions({
      target: target({ quantity: 'current', unit: 'A', comparator: 'atMost', threshold: 35 }),
      parameters: [{ key: 'controller_current_limit', name: 'Controller current limit', value: 30, unit: 'A' }],
      measured: { value: 33, revision: 'R3' },
      predicted: null,
    })).toEqual([])
  })

  it('says nothing for a quantity that doesn’t hurt or a unit it can’t read', () => {
    expect(designCautions({ target: target({ quantity: 'length', unit: 'mm', threshold: 5 }), parameters: launcher, measured: { value: 6, revision: 'R1' }, predicted: null })).toEqual([])
    expect(designCautions({ target: target({ unit: 'furlongs' }), parameters: launcher, measured: { value: 6, revision: 'R1' }, predicted: null })).toEqual([])
  })
})
