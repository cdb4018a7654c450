import jStat from 'jstat'
import { describe, expect, it } from 'vitest'
import type { FormulaError } from '#shared/utils/derived'
import {
  bisect, calibrate, calibratedPrediction, calibrationNu, checkModel, DesignError, effectiveParameters, intervalHalfWidth, parameterKeyOf, predict,
  ratioOf, rootNear, samplesNeeded, sensitivityOf, solveFor, type DesignParameter,
} from '#shared/utils/design'
import { tQuantile } from '#shared/utils/readingStats'

const param = (key: string, value: number | string, unit: string | null = null, tolerance: number | null = null): DesignParameter =>
  ({ key, name: key, value, unit, tolerance })

function thrown(f: () => unknown): Error {
  try {
    f()
  }
  catch (e) {
    return e as Error
  }
  throw new Error('expected a throw')
}

describe('parameter keys and inheritance', () => {
  it('makes a key from a name', () => {
    expect(parameterKeyOf('Wheel radius (front)')).toBe('wheel_radius_front')
    expect(parameterKeyOf('Gear ratio')).toBe('gear_ratio')
    expect(parameterKeyOf('3D infill')).toBe('p_3d_infill')
    expect(parameterKeyOf('Été')).toBe('ete')
    expect(parameterKeyOf('pi')).toBe('pi_param')
    expect(parameterKeyOf('—')).toBe('parameter')
  })

  it('inherits every parameter of the ancestors the revision does not set itself', () => {
    const r1 = [param('motor_speed', 3000, 'rpm'), param('wheel_radius', 50, 'mm', 0.5)]
    const r2 = [param('wheel_radius', 55, 'mm', 0.5)]
    const r3 = [param('ball_mass', 58, 'g')]
    const eff = effectiveParameters([r1, r2, r3])
    expect(eff.map(p => [p.key, p.value, p.inherited])).toEqual([
      ['motor_speed', 3000, true],
      ['wheel_radius', 55, true],
      ['ball_mass', 58, false],
    ])
    expect(effectiveParameters([r1, r2]).find(p => p.key === 'wheel_radius')!.inherited).toBe(false)
  })
})

describe('model check', () => {
  const params = { motor_speed: param('motor_speed', 3000, 'rpm'), wheel_radius: param('wheel_radius', 50, 'mm'), gain: param('gain', 2), note: param('note', 'S235 steel') }

  it('accepts rpm × mm as a speed (angles are dimensionless, rad = 1)', () => {
    expect(checkModel('motor_speed * wheel_radius', params, 'm/s').keys).toEqual(['motor_speed', 'wheel_radius'])
  })

  it('refuses a model of another dimension, naming both quantities', () => {
    const e = thrown(() => checkModel('motor_speed * wheel_radius^2', params, 'm/s')) as FormulaError
    expect(e.code).toBe('dimension')
    expect(e.message).toMatch(/^The model gives .* but this target is measured in velocity \(m\/s\)$/)
  })

  it('refuses a key no revision defines', () => {
    const e = thrown(() => checkModel('motor_speed * hub_radius', params, 'm/s')) as FormulaError
    expect(e.code).toBe('unknown-key')
    expect(e.message).toBe('The model uses "hub_radius", which no revision of this build defines as a parameter')
  })

  it('refuses a unit-less parameter in a dimensional model', () => {
    const e = thrown(() => checkModel('motor_speed * gain', params, 'm/s')) as FormulaError
    expect(e.code).toBe('dimension')
    expect(e.message).toContain('this target is measured in velocity (m/s)')
  })

  it('refuses a text parameter and a syntax error', () => {
    expect(thrown(() => checkModel('note * 2', params, 'count'))).toBeInstanceOf(DesignError)
    const e = thrown(() => checkModel('motor_speed * (wheel_radius', params, 'm/s')) as FormulaError
    expect(e.code).toBe('syntax')
    expect(e.message).toMatch(/^The model has a syntax error/)
  })
})

describe('prediction and propagation', () => {
  it('rim speed v = rω (OpenStax University Physics Vol. 1, eq. 10.4): 3000 rpm on a 50 mm radius', () => {
    // hand: ω = 3000·2π/60 = 314.159 rad/s; v = 0.05 m · 314.159 rad/s = 15.70796 m/s = 56.5487 km/h
    const p = predict('motor_speed * wheel_radius', [param('motor_speed', 3000, 'rpm'), param('wheel_radius', 50, 'mm')], 'm/s')
    expect(p.value).toBeCloseTo(50 * Math.PI / 10, 10)
    expect(p.u).toBe(0)
    expect(predict('motor_speed * wheel_radius', [param('motor_speed', 3000, 'rpm'), param('wheel_radius', 50, 'mm')], 'km/h').value).toBeCloseTo(56.548668, 5)
  })

  it('a product: relative standard uncertainties add in quadrature (GUM 5.1.6, eq. 12), u = a/√3 (GUM 4.3.7)', () => {
    // independent closed form: (u/f)² = (u_ω/ω)² + (u_r/r)², with u = a/√3 for each tolerance ±a
    const p = predict('motor_speed * wheel_radius', [param('motor_speed', 3000, 'rpm', 60), param('wheel_radius', 50, 'mm', 0.5)], 'm/s')
    const rel = Math.hypot(60 / Math.sqrt(3) / 3000, 0.5 / Math.sqrt(3) / 50)
    expect(p.u / p.value).toBeCloseTo(rel, 12)
  })

  it('a power: ½mv² has (u/E)² = (u_m/m)² + (2u_v/v)² (GUM 5.1.6, eq. 12; KE as OpenStax eq. 7.6)', () => {
    const p = predict('0.5 * ball_mass * exit_speed^2', [param('ball_mass', 58, 'g', 1), param('exit_speed', 20, 'm/s', 0.4)], 'J')
    // hand: E = 0.5 · 0.058 kg · (20 m/s)² = 11.6 J
    expect(p.value).toBeCloseTo(11.6, 12)
    const rel = Math.hypot(1 / Math.sqrt(3) / 58, 2 * 0.4 / Math.sqrt(3) / 20)
    expect(p.u / p.value).toBeCloseTo(rel, 12)
    const s = sensitivityOf(p)
    expect(s.find(x => x.parameter === 'ball_mass')!.elasticity).toBeCloseTo(1, 12)
    expect(s.find(x => x.parameter === 'exit_speed')!.elasticity).toBeCloseTo(2, 12)
    const sm = (1 / Math.sqrt(3) / 58) ** 2
    const sv = (2 * 0.4 / Math.sqrt(3) / 20) ** 2
    expect(s.find(x => x.parameter === 'ball_mass')!.share).toBeCloseTo(sm / (sm + sv), 12)
    expect(s.reduce((a, x) => a + x.share, 0)).toBeCloseTo(1, 12)
  })

  it('says why it cannot predict', () => {
    expect(thrown(() => predict('a * b', [param('a', 2)], 'count')).message).toBe('The revision has no parameter "b"')
    expect(thrown(() => predict('a / b', [param('a', 2), param('b', 0)], 'count'))).toBeInstanceOf(DesignError)
  })
})

describe('ratio and calibration', () => {
  it('ratio of a quotient: u(r)/r = √((u_m/m)² + (u_p/p)²) (GUM 5.1.6)', () => {
    const r = ratioOf({ mean: 12, u: 0.3 }, { value: 15, u: 0.6 })!
    expect(r.value).toBeCloseTo(0.8, 15)
    expect(r.u).toBeCloseTo(0.8 * Math.hypot(0.3 / 12, 0.6 / 15), 15)
    expect(ratioOf({ mean: 12, u: null }, { value: 15, u: 0.6 })).toEqual({ value: 0.8, u: null })
    expect(ratioOf({ mean: 12, u: 0.1 }, { value: 0, u: 0 })).toBeNull()
  })

  it('inverse-variance weighted mean, hand-computed', () => {
    // hand: w = 1/0.02² = 2500, 1/0.04² = 625; F = (0.8·2500 + 0.84·625)/3125 = 2525/3125 = 0.808; u = 1/√3125
    const c = calibrate([{ value: 0.8, u: 0.02 }, { value: 0.84, u: 0.04 }])!
    expect(c.method).toBe('weighted')
    expect(c.factor).toBeCloseTo(0.808, 14)
    expect(c.u).toBeCloseTo(1 / Math.sqrt(3125), 14)
  })

  it('the plain mean when a u is 0 or unknown', () => {
    const c = calibrate([{ value: 0.8, u: 0 }, { value: 0.9, u: 0.03 }, { value: 0.85, u: null }])!
    expect(c.method).toBe('plain')
    expect(c.factor).toBeCloseTo(0.85, 14)
    expect(c.u).toBeCloseTo(0.03 / 3, 14)
    expect(calibrate([])).toBeNull()
  })

  it('the factor’s ν is that of its only measured part, ∞ for tolerances alone', () => {
    const cal = calibrate([{ value: 0.8, u: 0.02 }])!
    expect(calibrationNu([{ ratio: 0.8, measuredRel: 0.025, measuredNu: 9, predictedRel: 0, u: 0.02 }], cal)).toBeCloseTo(9, 10)
    expect(calibrationNu([{ ratio: 0.8, measuredRel: 0, measuredNu: 9, predictedRel: 0.025, u: 0.02 }], cal)).toBe(Infinity)
  })
})

describe('solver', () => {
  it('bisection finds √2 as the root of x² − 2', () => {
    expect(bisect(x => x * x - 2, 0, 2)).toBeCloseTo(Math.SQRT2, 14)
    expect(rootNear(x => x * x - 2, 1).root).toBeCloseTo(Math.SQRT2, 14)
    expect(rootNear(x => x * x + 2, 1).root).toBeNull()
  })

  const rim = (radius: number, tol: number | null = null) => [param('motor_speed', 3000, 'rpm'), param('wheel_radius', radius, 'mm', tol)]
  const goal = (threshold: number) => ({ comparator: 'atLeast' as const, threshold, thresholdHigh: null })

  it('a linear model solves exactly: radius = r₀ × target / (F × predicted)', () => {
    // measured fell short by F = 0.8: the radius that reaches 18 m/s is r₀·18/(0.8·f(r₀))
    const f0 = predict('motor_speed * wheel_radius', rim(50), 'm/s').value
    const s = solveFor({ model: 'motor_speed * wheel_radius', parameters: rim(50), parameter: 'wheel_radius', targetUnit: 'm/s', goal: goal(18), factor: { value: 0.8, u: 0, nu: Infinity }, margin: 'none' })
    expect(s.value).toBeCloseTo(50 * 18 / (0.8 * f0), 9)
    expect(s.predicted).toBeCloseTo(18, 9)
  })

  it('a quadratic model against its closed form: v = √(2E/(F·m))', () => {
    const ps = [param('ball_mass', 58, 'g'), param('exit_speed', 20, 'm/s')]
    const s = solveFor({ model: '0.5 * ball_mass * exit_speed^2', parameters: ps, parameter: 'exit_speed', targetUnit: 'J', goal: goal(15), factor: { value: 0.9, u: 0, nu: Infinity }, margin: 'none' })
    expect(s.value).toBeCloseTo(Math.sqrt(2 * 15 / (0.9 * 0.058)), 9)
  })

  it('with a 95 % margin the lower bound meets the threshold: F·f − k·f·u_F = T, k = z(0.975) for ν = ∞', () => {
    const f0 = predict('motor_speed * wheel_radius', rim(50), 'm/s').value
    const s = solveFor({ model: 'motor_speed * wheel_radius', parameters: rim(50), parameter: 'wheel_radius', targetUnit: 'm/s', goal: goal(18), factor: { value: 0.8, u: 0.02, nu: Infinity }, margin: '95' })
    // f(r) = f0·r/50, so r = 50·T/(f0·(F − k·u_F)); k = 1.959964 (NIST/SEMATECH 1.3.6.7.2, ν = ∞: 1.960)
    expect(s.k).toBeCloseTo(1.96, 3)
    expect(s.value).toBeCloseTo(50 * 18 / (f0 * (0.8 - s.k! * 0.02)), 8)
    // at-most targets use the upper bound
    const m = solveFor({ model: 'motor_speed * wheel_radius', parameters: rim(50), parameter: 'wheel_radius', targetUnit: 'm/s', goal: { comparator: 'atMost', threshold: 18, thresholdHigh: null }, factor: { value: 0.8, u: 0.02, nu: Infinity }, margin: '95' })
    expect(m.value).toBeCloseTo(50 * 18 / (f0 * (0.8 + m.k! * 0.02)), 8)
  })

  it('a between target aims at the band’s middle', () => {
    const f0 = predict('motor_speed * wheel_radius', rim(50), 'm/s').value
    const s = solveFor({ model: 'motor_speed * wheel_radius', parameters: rim(50), parameter: 'wheel_radius', targetUnit: 'm/s', goal: { comparator: 'between', threshold: 10, thresholdHigh: 14 }, factor: { value: 1, u: 0, nu: Infinity }, margin: 'none' })
    expect(s.value).toBeCloseTo(50 * 12 / f0, 9)
  })

  it('a between target with a 95 % margin needs its interval inside the band', () => {
    const f0 = predict('motor_speed * wheel_radius', rim(50), 'm/s').value
    const band = { comparator: 'between' as const, threshold: 10, thresholdHigh: 14 }
    // u(F)·f = 0.05·12 = 0.6 m/s at the middle, ν = ∞: ±1.96·0.6 = ±1.18 fits in ±2
    const fits = solveFor({ model: 'motor_speed * wheel_radius', parameters: rim(50), parameter: 'wheel_radius', targetUnit: 'm/s', goal: band, factor: { value: 1, u: 0.05, nu: Infinity }, margin: '95' })
    expect(fits.value).toBeCloseTo(50 * 12 / f0, 9)
    expect(fits.u).toBeCloseTo(0.6, 9)
    // u(F)·f = 0.1·12 = 1.2 m/s: ±2.35 does not fit in ±2
    const e = thrown(() => solveFor({ model: 'motor_speed * wheel_radius', parameters: rim(50), parameter: 'wheel_radius', targetUnit: 'm/s', goal: band, factor: { value: 1, u: 0.1, nu: Infinity }, margin: '95' })) as DesignError
    expect(e.code).toBe('no-solution')
    expect(e.message).toMatch(/its 95 % interval \(±2\.35196 m\/s\) is wider than the half-band \(2 m\/s\)$/)
  })

  it('no solution within 1/1000× to 1000× says so', () => {
    const e = thrown(() => solveFor({ model: 'motor_speed * wheel_radius', parameters: rim(50), parameter: 'wheel_radius', targetUnit: 'm/s', goal: goal(1e6), factor: { value: 1, u: 0, nu: Infinity }, margin: 'none' })) as DesignError
    expect(e.code).toBe('no-solution')
    expect(e.message).toMatch(/^No value of "wheel_radius" between 0\.05 and 50000 mm makes the calibrated prediction reach 1000000 m\/s/)
    const notIn = thrown(() => solveFor({ model: 'motor_speed * wheel_radius', parameters: [...rim(50), param('ball_mass', 58, 'g')], parameter: 'ball_mass', targetUnit: 'm/s', goal: goal(18), factor: { value: 1, u: 0, nu: Infinity }, margin: 'none' })) as DesignError
    expect(notIn.code).toBe('unusable')
  })
})

describe('calibrated prediction (the what-if)', () => {
  // v = ω·r (OpenStax University Physics 1, eq. 10.4): 3000 rpm = 314.159… rad/s, r = 50 mm ± 0.5 mm
  // (rectangular: u_r = 0.5/√3 mm, GUM 4.3.7), so f = 15.70796 m/s and u_f = ω·u_r.
  // With F = 0.8, u(F) = 0.02 on ν = 8: u² = (f·u_F)² + (F·u_f)² (GUM 5.1.2 eq. 10 on F·f),
  // ν by Welch–Satterthwaite (GUM G.4.1) with the tolerance part at ν = ∞ (G.4.3), k = t(0.975, ν)
  // from jstat's Student t inverse.
  const omega = 3000 * 2 * Math.PI / 60
  const ps = [param('motor_speed', 3000, 'rpm'), param('wheel_radius', 50, 'mm', 0.5)]

  it('F·f with u from the factor and the tolerances, and k from their effective degrees of freedom', () => {
    const c = calibratedPrediction('motor_speed * wheel_radius', ps, 'm/s', { value: 0.8, u: 0.02, nu: 8 })
    const f = omega * 0.05
    const uf = omega * 0.0005 / Math.sqrt(3)
    const a = f * 0.02
    const b = 0.8 * uf
    const u = Math.hypot(a, b)
    const nu = u ** 4 / (a ** 4 / 8)
    expect(c.model.value).toBeCloseTo(15.70796, 5)
    expect(c.value).toBeCloseTo(0.8 * f, 12)
    expect(c.u).toBeCloseTo(u, 12)
    expect(c.nu).toBeCloseTo(nu, 8)
    expect(c.k).toBeCloseTo(jStat.studentt.inv(0.975, nu), 8)
    expect(c.ci95![0]).toBeCloseTo(0.8 * f - c.k * u, 10)
    expect(c.ci95![1]).toBeCloseTo(0.8 * f + c.k * u, 10)
  })

  it('an override replaces a parameter in its own unit; no calibration and no tolerance give no interval', () => {
    const c = calibratedPrediction('motor_speed * wheel_radius', [param('motor_speed', 3000, 'rpm'), param('wheel_radius', 50, 'mm')], 'km/h', { value: 1, u: 0, nu: Infinity }, { wheel_radius: 60 })
    // 314.159 rad/s × 0.06 m = 18.8496 m/s = 67.8584 km/h (1 km/h = 1/3.6 m/s, NIST SP 811 B.8)
    expect(c.value).toBeCloseTo(omega * 0.06 * 3.6, 10)
    expect(c.u).toBe(0)
    expect(c.ci95).toBeNull()
  })

  it('the solver’s answer is where the calibrated prediction meets the threshold', () => {
    const factor = { value: 0.8, u: 0.02, nu: 8 }
    const s = solveFor({ model: 'motor_speed * wheel_radius', parameters: ps, parameter: 'wheel_radius', targetUnit: 'm/s', goal: { comparator: 'atLeast', threshold: 18, thresholdHigh: null }, factor, margin: '95' })
    const c = calibratedPrediction('motor_speed * wheel_radius', ps, 'm/s', factor, { wheel_radius: s.value })
    expect(c.ci95![0]).toBeCloseTo(18, 8)
  })
})

describe('samples needed', () => {
  it('t(0.975, ν) against the NIST/SEMATECH e-Handbook table 1.3.6.7.2 (values from memory of the table)', () => {
    expect(tQuantile(0.975, 1)).toBeCloseTo(12.706, 3)
    expect(tQuantile(0.975, 10)).toBeCloseTo(2.228, 3)
    expect(tQuantile(0.975, 13)).toBeCloseTo(2.160, 3)
    expect(tQuantile(0.975, 14)).toBeCloseTo(2.145, 3)
  })

  it('the smallest n with t(0.975, n−1)·sd/√n < |mean − threshold|: 15 for sd = 1, distance 0.56', () => {
    // hand from the table: n = 14: 2.160/√14 = 0.5773 > 0.56; n = 15: 2.145/√15 = 0.5538 < 0.56
    const plan = samplesNeeded({ mean: 10.56, sd: 1, uB: null, goal: { comparator: 'atLeast', threshold: 10, thresholdHigh: null } })
    expect(plan.samplesNeeded).toBe(15)
    expect(intervalHalfWidth(1, 0, 15)).toBeCloseTo(2.145 / Math.sqrt(15), 3)
  })

  it('with a resolution, ν by Welch–Satterthwaite, and the smallest n holds', () => {
    const input = { mean: 20.5, sd: 1.2, uB: 0.1 / Math.sqrt(12), goal: { comparator: 'atMost' as const, threshold: 21, thresholdHigh: null } }
    const n = samplesNeeded(input).samplesNeeded!
    expect(intervalHalfWidth(1.2, input.uB, n)).toBeLessThan(0.5)
    expect(intervalHalfWidth(1.2, input.uB, n - 1)).toBeGreaterThanOrEqual(0.5)
  })

  it('null with the reason: no scatter, the resolution alone, past the cap', () => {
    const goal = { comparator: 'atLeast' as const, threshold: 10, thresholdHigh: null }
    expect(samplesNeeded({ mean: 11, sd: null, uB: null, goal })).toMatchObject({ samplesNeeded: null, reason: expect.stringMatching(/^No scatter yet/) })
    // 1.96·u_B ≥ distance: 1.96 · 1/√12 = 0.566 > 0.5
    expect(samplesNeeded({ mean: 10.5, sd: 0.3, uB: 1 / Math.sqrt(12), goal })).toMatchObject({ samplesNeeded: null, reason: expect.stringMatching(/resolution alone/) })
    expect(samplesNeeded({ mean: 10.001, sd: 1, uB: null, goal })).toMatchObject({ samplesNeeded: null, reason: expect.stringMatching(/^More than 10,000 samples/) })
  })

  it('a between target is judged against its nearer edge', () => {
    const plan = samplesNeeded({ mean: 10.56, sd: 1, uB: null, goal: { comparator: 'between', threshold: 10, thresholdHigh: 20 } })
    expect(plan.samplesNeeded).toBe(15)
  })
})
