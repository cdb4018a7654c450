import { describe, expect, it } from 'vitest'
import type { ReadingCreated } from '#shared/types/api'
import { readingSummary } from '../../../utils/readingSummary'

const stats = { sd: 0.3, uA: 0.1, uB: null, u: 0.1, nuEff: 4 }

describe('readingSummary', () => {
  it('states the reading alone when the revision had no other reading of the target', () => {
    const r: ReadingCreated = {
      reading: { id: 'r1', kind: 'samples', unit: 'km/h', status: 'met', n: 5, mean: 24.3132, ci95: [24.0932, 24.5332], ...stats },
      pooled: null,
    }
    expect(readingSummary(r)).toBe('n = 5, 24.31 ± 0.22 km/h — Met')
  })

  it('adds the pooled cell when there was', () => {
    const r: ReadingCreated = {
      reading: { id: 'r2', kind: 'samples', unit: 'N·m', status: 'short', n: 3, mean: 38.5, ci95: null, ...stats },
      pooled: { n: 8, mean: 40.05, ci95: [39.15, 40.95], readings: 2, status: 'marginal', ...stats },
    }
    expect(readingSummary(r)).toBe('n = 3, 38.5 N·m — Short. Pooled with the revision\'s other readings: n = 8, 40.05 ± 0.90 N·m — Marginal')
  })

  it('names a stated result as such rather than n = 1', () => {
    // 42.5 ± t(0.975, 6)·0.4 = 42.5 ± 2.447·0.4 (e-Handbook 1.3.6.7.2): half-width 0.98 to two digits
    const r: ReadingCreated = {
      reading: { id: 'r3', kind: 'stated', unit: 'N·m', status: 'met', n: 1, mean: 42.5, ci95: [42.5 - 0.9788, 42.5 + 0.9788], sd: null, uA: null, uB: null, u: 0.4, nuEff: 6 },
      pooled: null,
    }
    expect(readingSummary(r)).toBe('Stated result, 42.50 ± 0.98 N·m — Met')
  })

  it('names a track by its fitted speed rather than n = 1', () => {
    // 0.0751 ± t(0.975, 7)·0.0004 = ± 2.365·0.0004 (e-Handbook 1.3.6.7.2) = ± 0.000946 → two digits 0.00095
    const r: ReadingCreated = {
      reading: { id: 'r4', kind: 'track', unit: 'm/s', status: 'met', n: 1, mean: 0.0751, ci95: [0.0751 - 0.000946, 0.0751 + 0.000946], sd: null, uA: null, uB: null, u: 0.0004, nuEff: 7 },
      pooled: null,
    }
    expect(readingSummary(r)).toBe('Track (fitted speed), 0.07510 ± 0.00095 m/s — Met')
  })
})
