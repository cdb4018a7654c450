import { describe, expect, it } from 'vitest'
import type { SiRule } from '#shared/utils/cellStats'
import { derivedNuEff, evaluateDerivedTargets, evaluatePoint, type DerivedPoint, type InputCell, type MeasuredSeries } from '#shared/utils/derivedCells'
import { Z_975 } from '#shared/utils/readingStats'

const atLeast = (threshold: number): SiRule => ({ comparator: 'atLeast', threshold, thresholdHigh: null, noiseBand: null })
const value = (p: DerivedPoint | null | undefined) => {
  if (p?.kind !== 'value') throw new Error(`expected a value, got ${JSON.stringify(p)}`)
  return p
}

describe('derivedNuEff (Welch–Satterthwaite, GUM G.4.1 eq. G.2b)', () => {
  // ν_eff = u_c⁴ / Σ (cᵢuᵢ)⁴/νᵢ with u_c² = Σ (cᵢuᵢ)². The cases below are that formula worked
  // by hand for simple inputs, not values from a table.
  it('two equal terms with equal ν: ν_eff = 2ν', () => {
    // u_c⁴ = (2a²)² = 4a⁴; Σ = 2a⁴/ν → ν_eff = 2ν
    expect(derivedNuEff([{ contribution: 0.3, nuEff: 4 }, { contribution: 0.3, nuEff: 4 }])).toBeCloseTo(8, 12)
  })

  it('a term with infinite ν adds to u_c but not to the denominator', () => {
    // a = 0.4 (ν = 5), b = 0.3 (ν = ∞): u_c² = 0.25 → ν_eff = 0.25² / (0.4⁴/5) = 0.0625 · 5 / 0.0256
    expect(derivedNuEff([{ contribution: 0.4, nuEff: 5 }, { contribution: 0.3, nuEff: Infinity }])).toBeCloseTo(0.0625 * 5 / 0.0256, 10)
  })

  it('only Type B inputs (every ν infinite): ν_eff is infinite, so k = 1.96', () => {
    expect(derivedNuEff([{ contribution: 0.4, nuEff: Infinity }, { contribution: 0.1, nuEff: null }])).toBe(Infinity)
  })

  it('inputs without uncertainty take no part', () => {
    expect(derivedNuEff([{ contribution: null, nuEff: null }, { contribution: 0.2, nuEff: 7 }])).toBeCloseTo(7, 12)
  })
})

describe('evaluatePoint', () => {
  const energy = { key: 'energy', formula: '0.5 * m * v^2', unit: 'J', rule: atLeast(150) }

  it('E = ½mv² with Type B inputs only: u from GUM 5.1.6, interval E ± 1.959964·u', () => {
    // GUM JCGM 100:2008 5.1.6 (relative form for a product of powers): (u_E/E)² = (u_m/m)² + (2u_v/v)².
    const m = 2.5, um = 0.01, v = 12, uv = 0.05
    const p = value(evaluatePoint(energy, {
      m: { mean: m, u: um, nuEff: Infinity, unit: 'kg' },
      v: { mean: v, u: uv, nuEff: Infinity, unit: 'm/s' },
    }))
    const E = 0.5 * m * v * v
    const uE = E * Math.hypot(um / m, 2 * uv / v)
    expect(p.cell.mean).toBeCloseTo(E, 12)
    expect(p.cell.u).toBeCloseTo(uE, 12)
    expect(p.cell.nuEff).toBe(Infinity)
    expect(p.cell.ciLow).toBeCloseTo(E - Z_975 * uE, 12)
    expect(p.cell.ciHigh).toBeCloseTo(E + Z_975 * uE, 12)
    expect(p.cell).toMatchObject({ n: 0, readings: 0, sd: null })
    // E = 180 J and its interval (180 ± 1.4) clear 150 J
    expect(p.decision.status).toBe('met')
    // the budget: |∂E/∂m|·u_m = ½v²·u_m, |∂E/∂v|·u_v = m·v·u_v (GUM 5.1.3)
    expect(p.budget.find(b => b.key === 'm')!.contribution).toBeCloseTo(0.5 * v * v * um, 12)
    expect(p.budget.find(b => b.key === 'v')!.contribution).toBeCloseTo(m * v * uv, 12)
  })

  it('finite degrees of freedom widen the interval beyond 1.96·u (Student t)', () => {
    const p = value(evaluatePoint(energy, {
      m: { mean: 2.5, u: 0.01, nuEff: 3, unit: 'kg' },
      v: { mean: 12, u: 0.05, nuEff: 4, unit: 'm/s' },
    }))
    const half = (p.cell.ciHigh! - p.cell.ciLow!) / 2
    expect(half / p.cell.u!).toBeGreaterThan(Z_975)
    expect(p.cell.nuEff).toBeGreaterThan(3)
    expect(p.cell.nuEff).toBeLessThan(8)
  })

  it('a division by zero is a reason, not an exception', () => {
    const p = evaluatePoint({ key: 'r', formula: 'a / b', unit: '%', rule: atLeast(1) }, {
      a: { mean: 1, u: 0.1, nuEff: 4, unit: 'kg' },
      b: { mean: 0, u: 0, nuEff: 4, unit: 'kg' },
    })
    expect(p.kind).toBe('cant-evaluate')
    expect(p.kind === 'cant-evaluate' && p.reason).toMatch(/division by zero/)
  })
})

describe('evaluateDerivedTargets', () => {
  const cell = (mean: number, u: number | null = 0.1, nuEff: number | null = 4): InputCell => ({ mean, u, nuEff })
  const measured: Record<string, MeasuredSeries> = {
    torque: { unit: 'N·m', cells: [cell(40), cell(41), null, cell(44, 0.1)] },
    speed: { unit: 'rad/s', cells: [cell(10), null, null, cell(10.5, 0.05)] },
  }
  const power = { key: 'power', formula: 'torque * speed', unit: 'W', rule: atLeast(420) }

  it('a value where every input has one; "can\'t evaluate" naming the missing input; null where none has', () => {
    const { power: series } = evaluateDerivedTargets([power], measured, 4)
    expect(value(series![0]).cell.mean).toBeCloseTo(400, 12)
    expect(series![1]).toEqual({ kind: 'cant-evaluate', reason: 'No reading of "speed" on this revision' })
    expect(series![2]).toBeNull()
    expect(value(series![3]).cell.mean).toBeCloseTo(462, 12)
  })

  // docs/computation.md §Movement between revisions, rule 1 (derived targets)
  it('movement between the values by |Δ| > 2·√(u₁² + u₂²) (derived targets)', () => {
    const { power: series } = evaluateDerivedTargets([power], measured, 4)
    const first = value(series![0])
    const last = value(series![3])
    expect(first.decision.movement).toBeNull()
    const limit = 2 * Math.hypot(first.cell.u!, last.cell.u!)
    expect(last.decision.delta).toBeCloseTo(62, 12)
    expect(last.decision).toMatchObject({ movement: 'gained', real: 62 > limit, reason: 'uncertainty', p: null })
  })

  it('a derived target of a derived target is evaluated after it, with its u carried', () => {
    // two drive units: twice the power, twice its u (GUM eq. 10 with c = 2)
    const pair = { key: 'pair', formula: 'power * 2', unit: 'W', rule: atLeast(0) }
    const out = evaluateDerivedTargets([pair, power], measured, 4)
    const p = value(out.power![0])
    const e = value(out.pair![0])
    expect(e.cell.mean).toBeCloseTo(p.cell.mean * 2, 9)
    expect(e.cell.u).toBeCloseTo(p.cell.u! * 2, 9)
    expect(e.cell.nuEff).toBeCloseTo(p.cell.nuEff!, 9)
    expect(out.pair![1]).toEqual({ kind: 'cant-evaluate', reason: '"power" can\'t be evaluated on this revision' })
  })

  it('formulas that refer to each other in a circle, or to unknown keys, can\'t be evaluated (never throw)', () => {
    const a = { key: 'a', formula: 'b * 2', unit: 'W', rule: atLeast(0) }
    const b = { key: 'b', formula: 'a / 2 + torque * speed', unit: 'W', rule: atLeast(0) }
    const out = evaluateDerivedTargets([a, b], measured, 4)
    expect(out.a!.every(p => p?.kind === 'cant-evaluate')).toBe(true)
    const ghost = evaluateDerivedTargets([{ key: 'g', formula: 'nothing * 2', unit: 'W', rule: atLeast(0) }], measured, 2)
    expect(ghost.g![0]).toEqual({ kind: 'cant-evaluate', reason: 'The formula uses "nothing", which is not a target of this build' })
  })
})
