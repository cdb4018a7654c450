import { describe, expect, it } from 'vitest'
import { decimalsFor, formatMeasure, formatNuEff, formatNumber, formatPercent, formatSigned, halfWidth } from '../../../utils/measureFormat'

const M = '\u2212' // the typographic minus the tables print (common practice, no source)

describe('decimalsFor: the half-width quoted to two significant digits', () => {
  // GUM (JCGM 100:2008) 7.2.6: "It usually suffices to quote uc(y) and U … to at most two
  // significant digits"; its examples: 28,05 kHz → 28 kHz, and 27 mΩ (0.027 Ω) beside 10,058 Ω.
  it.each([
    [28.05, 0],
    [0.027, 3],
    [0.12, 2],
    [1.2, 1],
    [9.99, 1],
    [10, 0],
    [250, 0],
    [1e-12, 8], // capped: no table shows more than 8 decimals
  ])('%s → %s decimals', (u, d) => {
    expect(decimalsFor(u)).toBe(d)
  })

  it.each([null, undefined, 0, -1, Number.NaN, Number.POSITIVE_INFINITY])('none for %s', (u) => {
    expect(decimalsFor(u)).toBeNull()
  })
})

describe('formatMeasure', () => {
  it.each([
    // GUM 7.2.6: "if y = 10,057 62 Ω with uc(y) = 27 mΩ, y should be rounded to 10,058 Ω"
    [10.05762, [10.05762 - 0.027, 10.05762 + 0.027], 'Ω', '10.058 ± 0.027 Ω'],
    // GUM 7.2.6: "u(xi) = 28,05 kHz should be rounded down to 28 kHz"
    [1000.4, [1000.4 - 28.05, 1000.4 + 28.05], 'kHz', '1000 ± 28 kHz'],
    // NIST SP 811 (2008) §7.2: a space separates the value from the unit symbol
    [24.5312, [24.4112, 24.6512], 'km/h', '24.53 ± 0.12 km/h'],
    [-3.14159, [-3.24159, -3.04159], '', `${M}3.14 ± 0.10`],
    // no interval: the bare mean, four significant digits
    [24.5312, null, 'km/h', '24.53 km/h'],
    [null, [1, 2], 'km/h', '—'],
  ] as const)('%s with %j in %j → %s', (mean, ci, unit, text) => {
    expect(formatMeasure(mean, ci, unit)).toBe(text)
  })
})

describe('formatNumber and formatSigned', () => {
  it.each([
    [24.5312, undefined, '24.53'],
    [0.000123456, undefined, '0.0001235'],
    [123456.7, undefined, '123457'], // from 10⁴ up: six significant digits, so counts keep their units
    [2.5, 3, '2.500'],
    [-0.5, 2, `${M}0.50`],
    [Number.NaN, undefined, '—'],
    [null, 2, '—'],
  ] as const)('formatNumber(%s, %s) = %s', (x, d, text) => {
    expect(formatNumber(x, d)).toBe(text)
  })

  it.each([
    [0.4, 1, '+0.4'],
    [-0.4, 1, `${M}0.4`],
    [0, 1, '0.0'],
    [undefined, 1, '—'],
  ] as const)('formatSigned(%s, %s) = %s', (x, d, text) => {
    expect(formatSigned(x, d)).toBe(text)
  })
})

describe('formatPercent', () => {
  // NIST SP 811 (2008), chapter 7 (values of quantities), on the percent sign: a space is left
  // between the number and the symbol %. The exact section could not be checked here.
  it.each([
    [3.14159, '+3.1 %'],
    [-0.04, `${M}0.0 %`],
    [12.6, '+13 %'],
    [-250, `${M}250 %`],
    [null, '—'],
  ] as const)('%s → %s', (x, text) => {
    expect(formatPercent(x)).toBe(text)
  })
})

describe('halfWidth and formatNuEff', () => {
  it('halves the interval', () => {
    expect(halfWidth([24.41, 24.65])).toBeCloseTo(0.12, 12)
    expect(halfWidth(null)).toBeNull()
  })

  it.each([
    [{ nuEff: 7.26, u: 0.1, ci95: [1, 2] as [number, number] }, '7.3'],
    [{ nuEff: 148.7, u: 0.1, ci95: [1, 2] as [number, number] }, '149'],
    // GUM (JCGM 100:2008) G.4.2: a Type B component taken as exactly known has ν = ∞; with only
    // those, ν_eff is ∞ (the clause could not be re-read here; docs/computation.md states the rule)
    [{ nuEff: null, u: 0.1, ci95: [1, 2] as [number, number] }, '∞'],
    [{ nuEff: null, u: null, ci95: null }, '—'],
  ])('%j → %s', (s, text) => {
    expect(formatNuEff(s)).toBe(text)
  })
})
