import { describe, expect, it } from 'vitest'
import { StatsOverflowError } from '#shared/utils/readingStats'
import { TrackError, fitTrack, pixelBudget } from '#shared/utils/track'

// NIST Statistical Reference Datasets, Linear Least Squares Regression, "Norris" (lower level of
// difficulty): 36 observations of y against x, with certified values
//   B1 (slope)     1.00211681802045     its standard deviation 0.429796848199937E-03
//   B0 (intercept) -0.262323073774029
//   residual standard deviation 0.884796396144373, 34 degrees of freedom.
// Here the dataset's x plays the time and its y the position.
const NORRIS_X = [
  0.2, 337.4, 118.2, 884.6, 10.1, 226.5, 666.3, 996.3, 448.6, 777.0,
  558.2, 0.4, 0.6, 775.5, 666.9, 338.0, 447.5, 11.6, 556.0, 228.1,
  995.8, 887.6, 120.2, 0.3, 0.3, 556.8, 339.1, 887.2, 999.0, 779.0,
  11.1, 118.3, 229.2, 669.1, 448.9, 0.5,
]
const NORRIS_Y = [
  0.1, 338.8, 118.1, 888.0, 9.2, 228.1, 668.5, 998.5, 449.1, 778.9,
  559.2, 0.3, 0.1, 778.1, 668.8, 339.3, 448.9, 10.8, 557.7, 228.3,
  998.0, 888.8, 119.6, 0.3, 0.6, 557.6, 339.3, 888.0, 998.5, 778.9,
  10.2, 117.6, 228.9, 668.4, 449.2, 0.2,
]
const norris = NORRIS_X.map((t, i) => ({ t, x: NORRIS_Y[i]! }))
const rel = (a: number, b: number) => Math.abs(a - b) / Math.abs(b)

describe('the speed of a track: least-squares slope, its standard error, ν = n − 2', () => {
  it('meets the certified values of NIST StRD Norris', () => {
    const fit = fitTrack(norris)
    expect(fit.n).toBe(36)
    expect(fit.nu).toBe(34)
    expect(rel(fit.slope, 1.00211681802045)).toBeLessThan(1e-12)
    expect(rel(fit.intercept, -0.262323073774029)).toBeLessThan(1e-10)
    expect(rel(fit.u, 0.429796848199937e-3)).toBeLessThan(1e-10)
    expect(rel(fit.s, 0.884796396144373)).toBeLessThan(1e-10)
    expect(fit.residuals).toHaveLength(36)
  })

  it('keeps the certified slope and its standard deviation when the clock starts at 10⁶ (a harder, ill-conditioned form of Norris)', () => {
    // A line's slope and the slope's standard error don't change when the regressor is shifted by
    // a constant (the sums about the mean are the same): so the certified values still hold. Summing
    // raw t² here (≈ 3.6·10¹³ for Sₜₜ ≈ 5·10⁶), as a one-pass formula does, would lose about 7 of the 16 digits.
    const shifted = norris.map(p => ({ t: p.t + 1e6, x: p.x }))
    const fit = fitTrack(shifted)
    expect(rel(fit.slope, 1.00211681802045)).toBeLessThan(1e-9)
    expect(rel(fit.u, 0.429796848199937e-3)).toBeLessThan(1e-8)
    // the intercept moves by −slope·10⁶, exactly as the shift says
    expect(rel(fit.intercept, -0.262323073774029 - 1.00211681802045 * 1e6)).toBeLessThan(1e-12)
  })

  it('scales with the units: positions in mm over times in ms give the same number as m over s', () => {
    // 1 mm/ms = 1 m/s (NIST SP 811: milli- is 10⁻³ on both sides)
    const mmPerMs = fitTrack([{ t: 0, x: 0 }, { t: 4, x: 10.1 }, { t: 8, x: 19.9 }, { t: 12, x: 30.2 }])
    const mPerS = fitTrack([{ t: 0, x: 0 }, { t: 0.004, x: 0.0101 }, { t: 0.008, x: 0.0199 }, { t: 0.012, x: 0.0302 }])
    expect(rel(mPerS.slope, mmPerMs.slope)).toBeLessThan(1e-12)
    expect(rel(mPerS.u, mmPerMs.u)).toBeLessThan(1e-9)
  })

  it('on points exactly on a line, has that slope and no scatter', () => {
    const fit = fitTrack([0, 1, 2, 3, 4].map(t => ({ t, x: 2.5 + 7 * t })))
    expect(fit.slope).toBeCloseTo(7, 12)
    expect(fit.u).toBeCloseTo(0, 12)
  })

  it('hand-derived: three points (0, 0), (1, 1), (2, 3)', () => {
    // t̄ = 1, x̄ = 4/3, Sₜₜ = 2, Sₜₓ = 3: b = 3/2, a = 4/3 − 3/2 = −1/6;
    // residuals 1/6, −1/3, 1/6: SSE = 1/6, s² = 1/6 (ν = 1), u = √(1/12)
    const fit = fitTrack([{ t: 0, x: 0 }, { t: 1, x: 1 }, { t: 2, x: 3 }])
    expect(fit.slope).toBeCloseTo(1.5, 14)
    expect(fit.intercept).toBeCloseTo(-1 / 6, 14)
    expect(fit.u).toBeCloseTo(Math.sqrt(1 / 12), 14)
    expect(fit.residuals.map(r => Number(r.toFixed(12)))).toEqual([0.166666666667, -0.333333333333, 0.166666666667])
  })

  it('refuses fewer than three points, and points all at one time', () => {
    expect(() => fitTrack([{ t: 0, x: 0 }, { t: 1, x: 1 }])).toThrow(TrackError)
    expect(() => fitTrack([{ t: 0, x: 0 }, { t: 1, x: 1 }])).toThrow(/at least 3 points/)
    expect(() => fitTrack([{ t: 2, x: 0 }, { t: 2, x: 1 }, { t: 2, x: 5 }])).toThrow(/more than one time/)
  })

  it('says when the numbers leave double precision', () => {
    // the residuals are finite, their squares are not
    expect(() => fitTrack([{ t: 0, x: 1e308 }, { t: 1, x: -1e308 }, { t: 2, x: 1e308 }])).toThrow(StatsOverflowError)
  })
})

describe('the pixel grid’s part of u(speed)', () => {
  it('matches the closed form for marks a frame apart and a scale bar', () => {
    // 5 marks at 0, 1/240 … 4/240 s: Sₜₜ = (1/240)²·10. A 40 mm bar is 200 px long (0.2 mm/px).
    // Position: 0.2 mm · (½)/√3 / √Sₜₜ = 0.2·0.288675…·240/√10 mm/s = 4.38178… mm/s.
    // Scale: speed · √2·(½)/√3 / 200 = 5000 mm/s · 0.408248…/200 = 10.2062… mm/s.
    const times = [0, 1, 2, 3, 4].map(i => i / 240)
    const b = pixelBudget({ times, scale: 40, scalePx: 200, speed: 5000 })
    const position = 0.2 * (0.5 / Math.sqrt(3)) * 240 / Math.sqrt(10)
    const scale = 5000 * (Math.SQRT2 * 0.5 / Math.sqrt(3)) / 200
    expect(rel(b.position, position)).toBeLessThan(1e-12)
    expect(rel(b.scale, scale)).toBeLessThan(1e-12)
    expect(rel(b.total, Math.sqrt(position ** 2 + scale ** 2))).toBeLessThan(1e-12)
    expect(b.position).toBeCloseTo(4.38178, 4)
    expect(b.scale).toBeCloseTo(10.2062, 3)
  })

  it('halves the position part with four times the spread in time, and the scale part with a bar twice as long in pixels', () => {
    const a = pixelBudget({ times: [0, 1, 2], scale: 10, scalePx: 100, speed: 3 })
    const b = pixelBudget({ times: [0, 2, 4], scale: 10, scalePx: 100, speed: 3 })
    const c = pixelBudget({ times: [0, 1, 2], scale: 10, scalePx: 200, speed: 3 })
    expect(b.position / a.position).toBeCloseTo(0.5, 12)
    expect(c.scale / a.scale).toBeCloseTo(0.5, 12)
  })
})
