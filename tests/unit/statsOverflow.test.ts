import { describe, expect, it } from 'vitest'
import { cellStatus, decideCells, poolCell, type SiRule } from '#shared/utils/cellStats'
import { movementOf } from '#shared/utils/conformance'
import { evaluatePoint } from '#shared/utils/derivedCells'
import { forecast, linearFit } from '#shared/utils/forecast'
import { compareCells } from '#shared/utils/movers'
import { StatsOverflowError, computeStats, pooledStats, welchSatterthwaite, welchTest } from '#shared/utils/readingStats'
import { parseUnit, toSI } from '#shared/utils/units'

// Finite inputs whose statistics leave IEEE 754 binary64: the largest finite double is
// 1.7976931348623157e308 (IEEE 754-2008 §3.6, binary64: emax = 1023; ECMA-262 Number.MAX_VALUE),
// so a square above ~1.34e154 or a difference of ±1e308 values has no finite value. Every path
// refuses such values with a StatsOverflowError (the server answers 422) or, on a read-only
// path, leaves the result out; none throws a bare RangeError or returns NaN.

const atLeast: SiRule = { comparator: 'atLeast', threshold: 0.0115, thresholdHigh: null, noiseBand: null }

describe('reading statistics', () => {
  it('[11, 12] mm at resolution 0.1 mm pooled with [1e308] mm: an overflow, not a RangeError from ν_eff', () => {
    const mm = parseUnit('mm')
    const cell = [
      { values: [11, 12].map(v => toSI(v, mm)), resolution: 0.1e-3 },
      { values: [toSI(1e308, mm)], resolution: null },
    ]
    // the deviations from the mean (~3.3e304 m) square past the largest double
    expect(() => pooledStats(cell)).toThrow(StatsOverflowError)
    expect(() => poolCell(cell)).toThrow(StatsOverflowError)
  })

  it('values far apart overflow the mean itself', () => {
    // 1.7e308 − (−1.7e308) = 3.4e308 > 1.797e308
    expect(() => computeStats([1.7e308, -1.7e308])).toThrow(StatsOverflowError)
  })

  it('a spread whose interval overflows', () => {
    // sd ≈ 7.1e307 (finite), u = sd/√2, k(ν = 1) = 12.706 (t table, NIST/SEMATECH e-Handbook 1.3.6.7.2):
    // mean + k·u ≈ 7.5e307 + 6.4e308 is past the largest double
    expect(() => computeStats([0, 1.5e308])).toThrow(StatsOverflowError)
  })

  it('values just inside double precision still have statistics (the guard is not too eager)', () => {
    // deviations ~1e134 square to ~1e268, finite; ν_eff is scaled (below), so u⁴ never forms
    const s = computeStats([1e150, 1.0000000000000002e150, 1e150], 1e135)
    expect(Number.isFinite(s.mean) && Number.isFinite(s.u!) && Number.isFinite(s.ci95![1])).toBe(true)
  })

  it('Welch–Satterthwaite is scaled: a component whose u⁴ would overflow still gives ν_eff; an infinite u does not', () => {
    // GUM G.4.1: ν_eff = u⁴/Σ(uᵢ⁴/νᵢ) is unchanged when every uᵢ is scaled by one factor; with
    // u₁ = 1e200 (ν = 2) dominating u₂ = 1e-4 (ν = ∞), ν_eff = ν₁ = 2 (worked by hand)
    expect(welchSatterthwaite([{ u: 1e200, nu: 2 }, { u: 1e-4, nu: Infinity }])).toBe(2)
    // two equal components, ν = 4 each → 2ν = 8 (the formula worked by hand)
    expect(welchSatterthwaite([{ u: 0.3, nu: 4 }, { u: 0.3, nu: 4 }])).toBeCloseTo(8, 12)
    expect(() => welchSatterthwaite([{ u: Infinity, nu: 2 }, { u: 1, nu: 3 }])).toThrow(StatsOverflowError)
  })

  it('Welch’s test between samples whose variances overflow', () => {
    expect(() => welchTest({ n: 3, mean: 1, sd: 1e160 }, { n: 3, mean: 2, sd: 1 })).toThrow(StatsOverflowError)
    expect(() => welchTest({ n: 3, mean: 1.7e308, sd: 1 }, { n: 3, mean: -1.7e308, sd: 1 })).toThrow(StatsOverflowError)
  })
})

describe('movement between revisions', () => {
  const before = { n: 3, mean: -1.7e308, sd: 1 }
  const now = { n: 3, mean: 1.7e308, sd: 1 }

  it('means too far apart to subtract', () => {
    expect(() => movementOf(before, now, atLeast)).toThrow(StatsOverflowError)
    expect(() => compareCells({ ...before, u: null }, { ...now, u: null }, atLeast)).toThrow(StatsOverflowError)
  })

  it('a cell row whose neighbouring cells are too far apart', () => {
    const cell = (mean: number) => ({ n: 3, mean, sd: 1, ciLow: mean - 1, ciHigh: mean + 1 })
    expect(() => decideCells([cell(-1.7e308), cell(1.7e308)], atLeast)).toThrow(StatsOverflowError)
    // the status alone still works on each
    expect(cellStatus(cell(1.7e308), atLeast)).toBe('met')
  })
})

describe('derived targets', () => {
  const sum = { key: 's', formula: 'a + b', unit: 'm', rule: atLeast }

  it('an uncertainty whose 95 % interval overflows can’t be evaluated, and says why', () => {
    // k(ν = 2) = 4.303 (t table, NIST/SEMATECH e-Handbook 1.3.6.7.2): 4.3 × 1.5e308 has no double value
    const p = evaluatePoint(sum, {
      a: { mean: 1, u: 1.5e308, nuEff: 2, unit: 'm' },
      b: { mean: 1, u: 1e-3, nuEff: Infinity, unit: 'm' },
    })
    expect(p.kind).toBe('cant-evaluate')
    expect(p.kind === 'cant-evaluate' && p.reason).toMatch(/would overflow/)
  })

  it('a large uncertainty whose square would overflow is combined without overflowing (u_c by hypot)', () => {
    // u_c = √(1e200² + 1e-3²) = 1e200 for a sum (GUM 5.1.2, cᵢ = 1); ν_eff = 2 as above
    const p = evaluatePoint(sum, { a: { mean: 1, u: 1e200, nuEff: 2, unit: 'm' }, b: { mean: 1, u: 1e-3, nuEff: Infinity, unit: 'm' } })
    expect(p.kind === 'value' && [p.cell.u, p.cell.nuEff]).toEqual([1e200, 2])
  })

  it('finite inputs still give a value (u = √(a² + b²) for a sum, GUM 5.1.2 with cᵢ = 1)', () => {
    const p = evaluatePoint(sum, { a: { mean: 1, u: 0.3, nuEff: Infinity, unit: 'm' }, b: { mean: 2, u: 0.4, nuEff: Infinity, unit: 'm' } })
    expect(p.kind === 'value' && p.cell.u).toBeCloseTo(0.5, 12)
  })
})

describe('forecast', () => {
  it('a line through means too far apart overflows; the forecast is then left out', () => {
    expect(() => linearFit([1, 2, 3], [1.7e308, -1.7e308, 1.7e308])).toThrow(StatsOverflowError)
    const f = forecast([1.7e308, -1.7e308, 1.7e308].map((mean, i) => ({ index: i + 1, label: `R${i + 1}`, mean })), { comparator: 'atLeast', threshold: 1 })
    expect(f.status).toBe('not-enough-data')
    expect(f.slope).toBeNull()
  })
})
