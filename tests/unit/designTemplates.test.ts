import { describe, expect, it } from 'vitest'
import { FormulaError, evaluateDerived } from '#shared/utils/derived'
import { DESIGN_TEMPLATES, checkTemplate, fillTemplate, findTemplate } from '#shared/utils/designTemplates'
import { fromSI, toSI } from '#shared/utils/units'

// Each check is a closed form worked by hand from the template's own equation (its source is
// named in the template); unit factors from NIST SP 811 (1 rpm = 2π/60 rad/s, 1 mAh = 3.6 C).

function evaluate(key: string, fill: Record<string, string>, values: Record<string, [number, string]>, unit: string) {
  const template = findTemplate(key)!
  const model = fillTemplate(template, fill)
  const inputs = Object.fromEntries(Object.entries(values).map(([k, [v, u]]) => [k, { mean: toSI(v, u), u: null, unit: u }]))
  return { model, value: fromSI(evaluateDerived(model, inputs, unit).mean, unit) }
}

describe('design templates', () => {
  it.each(DESIGN_TEMPLATES.map(t => [t.key, t]))('%s gives its result’s quantity from its slots, and names a source', (_, t) => {
    expect(() => checkTemplate(t)).not.toThrow()
    expect(t.source.length).toBeGreaterThan(10)
  })

  it('rim speed: 3000 rpm on a 50 mm radius is 3000·2π/60 · 0.05 = 15.70796… m/s', () => {
    const r = evaluate('rim-speed', { omega: 'motor_speed', r: 'wheel_radius' }, { motor_speed: [3000, 'rpm'], wheel_radius: [50, 'mm'] }, 'm/s')
    expect(r.model).toBe('motor_speed * wheel_radius')
    expect(r.value).toBeCloseTo(5 * Math.PI, 12)
  })

  it('kinetic energy: ½ · 0.145 kg · (40 m/s)² = 116 J', () => {
    const r = evaluate('kinetic-energy', { m: 'ball_mass', v: 'exit_speed' }, { ball_mass: [145, 'g'], exit_speed: [40, 'm/s'] }, 'J')
    expect(r.model).toBe('0.5 * ball_mass * exit_speed^2')
    expect(r.value).toBeCloseTo(116, 10)
  })

  it('slider-crank: x = r + l at 0°, √(l² − r²) at 90°', () => {
    const at = (deg: number) => evaluate('slider-crank', { r: 'crank', l: 'rod', theta: 'angle' }, { crank: [30, 'mm'], rod: [100, 'mm'], angle: [deg, 'deg'] }, 'mm').value
    expect(at(0)).toBeCloseTo(130, 9)
    expect(at(90)).toBeCloseTo(Math.sqrt(100 ** 2 - 30 ** 2), 9)
    expect(at(180)).toBeCloseTo(70, 9)
  })

  it('motor no-load speed: 1000 rpm/V × 12 V = 12,000 rpm', () => {
    expect(evaluate('motor-no-load-speed', { kv: 'kv', voltage: 'pack_voltage' }, { kv: [1000, 'rpm/V'], pack_voltage: [12, 'V'] }, 'rpm').value).toBeCloseTo(12_000, 8)
  })

  it('battery continuous current: 20 C × 5000 mAh = 100 A', () => {
    expect(evaluate('battery-continuous-current', { c_rating: 'c', capacity: 'cap' }, { c: [20, '1/h'], cap: [5000, 'mAh'] }, 'A').value).toBeCloseTo(100, 10)
  })

  it('rotational power: 2 N·m at 3000 rpm = 2 · 100π = 628.3185… W', () => {
    expect(evaluate('rotational-power', { torque: 'torque', omega: 'speed' }, { torque: [2, 'N·m'], speed: [3000, 'rpm'] }, 'W').value).toBeCloseTo(200 * Math.PI, 9)
  })

  it('fills slots as whole names, with keys that share letters with them, or numbers', () => {
    expect(fillTemplate(findTemplate('rim-speed')!, { omega: 'omega_r', r: 'r_omega' })).toBe('omega_r * r_omega')
    expect(fillTemplate(findTemplate('kinetic-energy')!, { m: 'mass', v: '12.5' })).toBe('0.5 * mass * 12.5^2')
  })

  it('refuses an empty slot or something that is not a key or a number', () => {
    expect(() => fillTemplate(findTemplate('rim-speed')!, { omega: 'motor_speed' })).toThrow('Fill radius')
    expect(() => fillTemplate(findTemplate('rim-speed')!, { omega: 'a + b', r: 'r' })).toThrow(FormulaError)
  })
})
