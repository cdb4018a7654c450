import { describe, expect, it } from 'vitest'
import { compareCells, rankMovements } from '#shared/utils/movers'

// Sample sets of the worked examples of the Wikipedia article "Welch's t-test" (section
// Examples), as published by Rosetta Code, task "Welch's t-test": example 1 (A1 vs A2), R's
// two-sided p = 0.021378 (checked to 9 decimals in readingStats.test.ts).
const A1 = [27.5, 21.0, 19.0, 23.6, 17.0, 17.9, 16.9, 20.1, 21.9, 22.6, 23.1, 19.6, 19.0, 21.7, 21.4]
const A2 = [27.1, 22.0, 20.8, 23.4, 23.4, 23.5, 25.8, 22.0, 24.8, 20.2, 21.9, 22.1, 22.9, 20.5, 24.4]

function summary(xs: number[]) {
  const n = xs.length
  const mean = xs.reduce((a, b) => a + b, 0) / n
  const sd = Math.sqrt(xs.reduce((a, x) => a + (x - mean) ** 2, 0) / (n - 1))
  return { n, mean, sd, u: sd / Math.sqrt(n) }
}

describe('compareCells', () => {
  it('Welch between two pooled cells, both directions (Wikipedia example 1: p = 0.021)', () => {
    const up = compareCells(summary(A1), summary(A2), { comparator: 'atLeast', threshold: 20 })
    const down = compareCells(summary(A2), summary(A1), { comparator: 'atLeast', threshold: 20 })
    expect(up).toMatchObject({ movement: 'gained', real: true, reason: 'welch' })
    expect(down).toMatchObject({ movement: 'slipped', real: true, reason: 'welch' })
    expect(up.p).toBeCloseTo(0.021, 3)
    expect(down.p).toBe(up.p)
    expect(up.delta).toBeCloseTo(-down.delta, 12)
  })

  it('derived: real when |Δ| > 2·√(u₁² + u₂²), never Welch (docs/computation.md §Movement between revisions, rule 1)', () => {
    const a = { mean: 100, n: 0, sd: null, u: 3 }
    const b = { mean: 109, n: 0, sd: null, u: 4 } // 2·√(9 + 16) = 10 > 9
    expect(compareCells(a, b, { comparator: 'atLeast', threshold: 90 }, true)).toMatchObject({ movement: 'steady', real: false, reason: 'uncertainty', p: null })
    expect(compareCells(a, { ...b, mean: 110.5 }, { comparator: 'atLeast', threshold: 90 }, true)).toMatchObject({ movement: 'gained', real: true, reason: 'uncertainty' })
    expect(compareCells(a, { ...b, mean: 89.5 }, { comparator: 'atLeast', threshold: 90 }, true)).toMatchObject({ movement: 'slipped', real: true })
  })
})

describe('rankMovements', () => {
  const item = (id: string, movement: 'gained' | 'slipped' | 'steady' | null, real: boolean | null, delta: number | null, p: number | null) => ({ id, movement, real, delta, p })

  it('real movements first (Gained and Slipped alike) by |Δ| then p; then the steady ones; the first revision last', () => {
    const ranked = rankMovements([
      item('R1', null, null, null, null),
      item('R2', 'steady', false, 5, 0.2),
      item('R3', 'gained', true, 2, 0.001),
      item('R4', 'slipped', true, -3, 0.01),
      item('R5', 'gained', true, 3, 0.0001),
      item('R6', 'steady', false, 0.5, 0.6),
    ])
    expect(ranked.map(i => i.id)).toEqual(['R5', 'R4', 'R3', 'R2', 'R6', 'R1'])
  })

  it('a size of your own: relative changes rank targets of different units together', () => {
    const ranked = rankMovements(
      [{ ...item('mass', 'gained', true, -0.2, 0.01), scale: 4 }, { ...item('speed', 'gained', true, 1.5, 0.01), scale: 25 }],
      i => Math.abs(i.delta!) / i.scale,
    )
    expect(ranked.map(i => i.id)).toEqual(['speed', 'mass']) // 6 % before 5 %
  })
})
