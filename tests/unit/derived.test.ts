import { describe, expect, it } from 'vitest'
import {
  assertNoCycle, checkFormula, evaluateDerived, findCycle, FormulaError, parseFormula,
} from '#shared/utils/derived'
import type { FormulaErrorCode } from '#shared/utils/derived'
import { diffToSI, fromSI, toSI } from '#shared/utils/units'

function formulaError(run: () => unknown): FormulaError {
  try {
    run()
  }
  catch (e) {
    expect(e).toBeInstanceOf(FormulaError)
    return e as FormulaError
  }
  throw new Error('expected a FormulaError')
}

describe('parseFormula', () => {
  it('lists the keys a formula uses, in order of first use', () => {
    expect(parseFormula('0.5 * payload_mass * exit_speed^2').symbols).toEqual(['payload_mass', 'exit_speed'])
    expect(parseFormula('sqrt(a^2 + b^2) / pi').symbols).toEqual(['a', 'b'])
  })

  it('reads the multiplication signs and superscripts people paste', () => {
    expect(parseFormula('0.5 · m × v² − 2').symbols).toEqual(['m', 'v'])
  })

  it.each([
    ['', 'empty'],
    ['a +', 'unfinished'],
    ['a = 2', 'assignment'],
    ['f(x) = x^2', 'function definition'],
    ['a > b', 'comparison'],
    ['a ? b : c', 'conditional'],
    ['a!', 'factorial'],
    ['a mod b', 'modulo'],
    ['[a, b]', 'matrix'],
    ['"text"', 'string'],
    ['foo(a)', 'unlisted function'],
    ['log(a, 2)', 'extra argument'],
    ['sqrt * a', 'function name used as a value'],
  ])('refuses %j (%s) with code syntax', (formula) => {
    expect(formulaError(() => parseFormula(formula)).code).toBe<FormulaErrorCode>('syntax')
  })
})

describe('checkFormula', () => {
  const inputs = {
    torque: { unit: 'N·m' },
    speed: { unit: 'rpm' },
    mass: { unit: 'kg' },
    exit_speed: { unit: 'km/h' },
  }

  it.each([
    ['torque * speed', 'W'], // P = τω; NIST SP 811 (2008) 4.2.1, Table 3: rad = m·m⁻¹ = 1, so N·m·rad/s = N·m/s = W
    ['torque * speed', 'hp'],
    ['0.5 * mass * exit_speed^2', 'J'],
    ['0.5 * mass * exit_speed^2', 'kWh'],
    ['sqrt(2 * torque / mass)', 'm/s'],
  ])('accepts %s measured in %s', (formula, unit) => {
    expect(checkFormula(formula, inputs, unit).symbols.length).toBeGreaterThan(0)
  })

  it('refuses a key that is not a target, naming it', () => {
    const e = formulaError(() => checkFormula('torque * wheel_speed', inputs, 'W'))
    expect(e.code).toBe<FormulaErrorCode>('unknown-key')
    expect(e.message).toContain('"wheel_speed"')
    expect(e.keys).toEqual(['wheel_speed'])
  })

  it('refuses a result of the wrong dimension, naming both quantities', () => {
    const e = formulaError(() => checkFormula('torque * speed', inputs, 'J'))
    expect(e.code).toBe<FormulaErrorCode>('dimension')
    expect(e.message).toBe('The formula gives power (W) but this target is measured in energy (J)')
  })

  it('names a dimension no quantity has in base units', () => {
    // kg·(m/s) / (kg·m²/s²) = s/m
    const e = formulaError(() => checkFormula('mass * exit_speed / torque', inputs, 'count'))
    expect(e.message).toBe('The formula gives s/m but this target is measured in dimensionless (count)')
  })

  it.each([
    ['mass + exit_speed', /adds velocity \(m\/s\) to mass \(kg\)/],
    ['exp(mass)', /exp\(\) needs a dimensionless argument/],
    ['mass ^ exit_speed', /exponent/],
  ])('refuses %s inside the formula', (formula, message) => {
    const e = formulaError(() => checkFormula(formula, inputs, 'kg'))
    expect(e.code).toBe<FormulaErrorCode>('dimension')
    expect(e.message).toMatch(message)
  })
})

describe('findCycle', () => {
  it.each([
    [{ a: ['b'], b: ['c'], c: ['a'] }, ['a', 'b', 'c', 'a']],
    [{ power: ['power'] }, ['power', 'power']],
    [{ e: ['m', 'v'], p: ['e', 't'], q: ['p', 'e'] }, null], // shared inputs, no circle
    [{ x: ['y'], y: ['z'], z: ['y'] }, ['y', 'z', 'y']],
  ])('%j → %j', (graph, cycle) => {
    expect(findCycle(graph)).toEqual(cycle)
  })

  it('assertNoCycle names the path', () => {
    const e = formulaError(() => assertNoCycle({ a: ['b'], b: ['c'], c: ['a'] }))
    expect(e.code).toBe<FormulaErrorCode>('cycle')
    expect(e.message).toContain('a → b → c → a')
  })
})

describe('evaluateDerived', () => {
  it('E = ½mv²: GUM 5.1.6 relative form, (u_E/E)² = (u_m/m)² + (2u_v/v)²', () => {
    // GUM JCGM 100:2008 5.1.6: for Y = c·X1^p1·X2^p2, (u_c(y)/y)² = Σ (p_i·u(x_i)/x_i)².
    const m = 2.5, um = 0.01, v = 12, uv = 0.05
    const r = evaluateDerived('0.5 * m * v^2', {
      m: { mean: m, u: um, unit: 'kg' },
      v: { mean: v, u: uv, unit: 'm/s' },
    }, 'J')
    expect(r.mean).toBeCloseTo(180, 12) // ½·2.5·12²
    expect(r.u! / r.mean).toBeCloseTo(Math.sqrt((um / m) ** 2 + (2 * uv / v) ** 2), 14)
    // Sensitivity coefficients (GUM 5.1.3): ∂E/∂m = ½v², ∂E/∂v = m·v.
    expect(r.partials.m).toBeCloseTo(72, 12)
    expect(r.partials.v).toBeCloseTo(30, 12)
  })

  it('a sum: u² = u1² + u2² (GUM 5.1.2 eq. 10 with c_i = 1)', () => {
    const r = evaluateDerived('a + b', {
      a: { mean: 10, u: 0.3, unit: 'kg' },
      b: { mean: 2, u: 0.4, unit: 'kg' },
    }, 'kg')
    expect(r.mean).toBe(12)
    expect(r.u).toBeCloseTo(0.5, 14)
  })

  it('a quotient: (u/q)² = (u1/x1)² + (u2/x2)² (GUM 5.1.6 with p = 1, −1)', () => {
    // Lever arm = torque / force: 10 N·m ± 0.2 over 40 N ± 0.5 → 0.25 m.
    const r = evaluateDerived('torque / force', {
      torque: { mean: 10, u: 0.2, unit: 'N·m' },
      force: { mean: 40, u: 0.5, unit: 'N' },
    }, 'mm')
    expect(r.mean).toBeCloseTo(0.25, 14)
    expect(r.u! / r.mean).toBeCloseTo(Math.hypot(0.2 / 10, 0.5 / 40), 14)
  })

  it('mixed units: mass in lb, speed in mph, energy in J and kWh, all through SI', () => {
    // 1 lb = 0.45359237 kg and 1 mi = 1609.344 m, both exact (1959 international yard and pound
    // agreement; the same exact values as in units.test.ts), so 1 mph = 1609.344 m / 3600 s =
    // 0.44704 m/s; 1 kWh = 1000 W × 3600 s = 3.6e6 J. Products of the definitions, worked here.
    const mLb = 3, umLb = 0.02, vMph = 20, uvMph = 0.3
    const m = mLb * 0.45359237, um = umLb * 0.45359237
    const v = vMph * 0.44704, uv = uvMph * 0.44704
    const r = evaluateDerived('0.5 * m * v^2', {
      m: { mean: toSI(mLb, 'lb'), u: diffToSI(umLb, 'lb'), unit: 'lb' },
      v: { mean: toSI(vMph, 'mph'), u: diffToSI(uvMph, 'mph'), unit: 'mph' },
    }, 'J')
    const E = 0.5 * m * v ** 2
    expect(r.mean / E).toBeCloseTo(1, 13)
    expect(r.u! / E).toBeCloseTo(Math.hypot(um / m, 2 * uv / v), 13)
    expect(fromSI(r.mean, 'kWh')).toBeCloseTo(E / 3.6e6, 17)
    expect(() => evaluateDerived('0.5 * m * v^2', {
      m: { mean: m, u: um, unit: 'lb' },
      v: { mean: v, u: uv, unit: 'mph' },
    }, 'kWh')).not.toThrow()
  })

  it('torque × speed in rpm gives watts: P = τω with ω = 2π·n/60', () => {
    // 40 N·m at 200 rpm: P = τω (power of a torque turning at ω, with rad = 1 as above) and
    // ω = 200 rev/min × 2π rad/rev ÷ 60 s/min, so P = 40·200·2π/60 = 837.758… W (worked here).
    const r = evaluateDerived('torque * speed', {
      torque: { mean: 40, u: null, unit: 'N·m' },
      speed: { mean: toSI(200, 'rpm'), u: null, unit: 'rpm' },
    }, 'W')
    expect(r.mean).toBeCloseTo(40 * 200 * 2 * Math.PI / 60, 10)
    expect(r.u).toBeNull() // no input has an uncertainty
  })

  it('a function of one input: u = |f′(x)|·u(x) (GUM eq. 10, one term)', () => {
    const r = evaluateDerived('sqrt(a)', { a: { mean: 16, u: 0.8, unit: 'count' } }, 'count')
    expect(r.mean).toBe(4)
    expect(r.u).toBeCloseTo(0.8 / (2 * 4), 15) // d√a/da = 1/(2√a)
  })

  it('an input without uncertainty contributes nothing; the others still propagate', () => {
    const r = evaluateDerived('a * b', {
      a: { mean: 3, u: null, unit: 'A' },
      b: { mean: 5, u: 0.1, unit: 'V' },
    }, 'W')
    expect(r.mean).toBe(15)
    expect(r.u).toBeCloseTo(3 * 0.1, 15) // |∂(ab)/∂b|·u(b) = a·u(b)
  })

  it.each([
    ['a / b', { a: 1, b: 0 }],
    ['a / (b - a)', { a: 2, b: 2 }],
    ['sqrt(a - b)', { a: 1, b: 2 }], // not a real number
    ['log(a)', { a: 0 }],
  ])('%s with %j → "can\'t evaluate"', (formula, values) => {
    const inputs = Object.fromEntries(Object.entries(values).map(([k, mean]) => [k, { mean, u: 0.1, unit: 'count' }]))
    const e = formulaError(() => evaluateDerived(formula, inputs, 'count'))
    expect(e.code).toBe<FormulaErrorCode>('evaluate')
    expect(e.message).toMatch(/^Can't evaluate/)
  })

  it('checks the formula before evaluating it', () => {
    expect(formulaError(() => evaluateDerived('a * b', { a: { mean: 1, u: null, unit: 'kg' } }, 'kg')).code)
      .toBe<FormulaErrorCode>('unknown-key')
    expect(formulaError(() => evaluateDerived('a', { a: { mean: 1, u: null, unit: 'kg' } }, 'N')).code)
      .toBe<FormulaErrorCode>('dimension')
  })
})
