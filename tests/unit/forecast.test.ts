import { describe, expect, it } from 'vitest'
import { forecast, forecastOfHistory, labelAt, linearFit } from '#shared/utils/forecast'
import { norrisCertified, norrisData } from '../fixtures/strd-norris'

/** Agreement to `digits` significant digits (log relative error, as the StRD reports use). */
function expectSignificantDigits(actual: number, certified: number, digits: number) {
  const lre = -Math.log10(Math.abs(actual - certified) / Math.abs(certified))
  expect(lre, `${actual} vs certified ${certified}`).toBeGreaterThanOrEqual(digits)
}

describe('linearFit', () => {
  // NIST/ITL StRD, Linear Least Squares Regression, dataset Norris: certified values
  // (Norris.dat lines 31–46), data copied into tests/fixtures/strd-norris.ts.
  const xs = norrisData.map(d => d.x)
  const ys = norrisData.map(d => d.y)
  const fit = linearFit(xs, ys)

  it.each([
    ['slope', fit.slope, norrisCertified.b1],
    ['intercept', fit.intercept, norrisCertified.b0],
    ['residual standard deviation', fit.residualSd!, norrisCertified.residualSd],
  ])('Norris %s agrees with the certified value to ≥ 10 significant digits', (_name, actual, certified) => {
    expectSignificantDigits(actual, certified, 10)
  })

  it('Norris uses all 36 observations', () => {
    expect(fit.n).toBe(36)
  })

  it('keeps its precision when x and y carry a large offset', () => {
    // Same Norris data shifted by 10⁶ in x and y: the slope is unchanged in exact arithmetic
    // and the intercept becomes b0 + 10⁶·(1 − b1) (algebra on the certified values).
    const shifted = linearFit(xs.map(x => x + 1e6), ys.map(y => y + 1e6))
    expectSignificantDigits(shifted.slope, norrisCertified.b1, 10)
    expectSignificantDigits(shifted.residualSd!, norrisCertified.residualSd, 10)
  })

  it.each([
    [[1], [1]],
    [[1, 2], [1]],
    [[2, 2, 2], [1, 2, 3]],
    [[1, 2, Number.NaN], [1, 2, 3]],
  ])('refuses input it cannot fit: xs %j, ys %j', (x, y) => {
    expect(() => linearFit(x, y)).toThrow(RangeError)
  })
})

// Forecast cases: constructed so the least-squares line is exact, hence the crossing is
// computed by hand: line y = a + b·x crosses T at x = (T − a)/b.
const revisions = (means: number[], first = 1) =>
  means.map((mean, i) => ({ index: first + i, label: `R${first + i}`, mean }))

describe('forecast', () => {
  it('rising toward an atLeast threshold: crosses ahead of the last revision', () => {
    // Means 30, 32, 34, 36 on R1–R4: y = 28 + 2x; T = 40 is reached at x = 6, two after R4.
    const f = forecast(revisions([30, 32, 34, 36]), { comparator: 'atLeast', threshold: 40 })
    expect(f.status).toBe('converging')
    expect(f.n).toBe(4)
    expect(f.slope).toBeCloseTo(2, 12)
    expect(f.intercept).toBeCloseTo(28, 12)
    expect(f.crossesAt).toBeCloseTo(6, 12)
    expect(f.crossesAfterLast).toBe(2)
    expect(f.line.map(p => p.index)).toEqual([1, 2, 3, 4, 6])
    expect(f.line.at(-1)!.value).toBeCloseTo(40, 12)
  })

  it('falling toward an atMost threshold: a fractional crossing rounds up', () => {
    // Means 5.0, 4.6, 4.2 on R1–R3: y = 5.4 − 0.4x; T = 3.5 at x = 4.75, i.e. 1.75 after R3 → 2.
    const f = forecast(revisions([5.0, 4.6, 4.2]), { comparator: 'atMost', threshold: 3.5 })
    expect(f.status).toBe('converging')
    expect(f.slope).toBeCloseTo(-0.4, 12)
    expect(f.crossesAt).toBeCloseTo(4.75, 12)
    expect(f.crossesAfterLast).toBe(2)
  })

  it('between: approaches the band from above and stops at its upper edge', () => {
    // Means 28, 27, 26 (km/h, say) on R1–R3: y = 29 − x; band [24, 25] is entered at x = 4.
    const f = forecast(revisions([28, 27, 26]), { comparator: 'between', threshold: 24, thresholdHigh: 25 })
    expect(f.status).toBe('converging')
    expect(f.crossesAt).toBeCloseTo(4, 12)
    expect(f.crossesAfterLast).toBe(1)
  })

  it('only the last N revisions are used (window, default 5)', () => {
    // R1–R3 fall, R4–R8 rise 1 per revision from 10: the default window sees only the rise.
    const f = forecast(revisions([50, 40, 30, 10, 11, 12, 13, 14]), { comparator: 'atLeast', threshold: 20 })
    expect(f.n).toBe(5)
    expect(f.slope).toBeCloseTo(1, 12)
    expect(f.crossesAt).toBeCloseTo(14, 12) // y = x + 6 reaches 20 at x = 14, six after R8
    expect(f.crossesAfterLast).toBe(6)
    expect(forecast(revisions([50, 40, 30, 10, 11, 12, 13, 14]), { comparator: 'atLeast', threshold: 20 }, { window: 8 }).status)
      .toBe('not-converging')
  })

  it('already met: the last mean satisfies the target', () => {
    const f = forecast(revisions([36, 38, 41]), { comparator: 'atLeast', threshold: 40 })
    expect(f.status).toBe('already-met')
    expect(f.crossesAt).toBeNull()
    expect(f.line.at(-1)!.index).toBe(6) // extended 3 revisions past R3
  })

  it.each([
    ['flat', [30, 30, 30, 30], 'atLeast', 40],
    ['moving away from an atLeast threshold', [36, 34, 33], 'atLeast', 40],
    ['moving away from an atMost threshold', [4.2, 4.6, 5.0], 'atMost', 3.5],
  ] as const)('%s → not converging, line extended 3 revisions', (_case, means, comparator, threshold) => {
    const f = forecast(revisions([...means]), { comparator, threshold })
    expect(f.status).toBe('not-converging')
    expect(f.crossesAt).toBeNull()
    expect(f.crossesAfterLast).toBeNull()
    expect(f.line.at(-1)!.index).toBe(means.length + 3)
  })

  it('the line already past the threshold at the last revision: the next revision meets it', () => {
    // Means 10, 20, 19 on R1–R3: y = 22/3 + 4.5x, which passes T = 19.5 at x ≈ 2.70, while
    // the last mean (19) is still short — the forecast points at the next revision.
    const f = forecast(revisions([10, 20, 19]), { comparator: 'atLeast', threshold: 19.5 })
    expect(f.status).toBe('converging')
    expect(f.crossesAt).toBe(3)
    expect(f.crossesAfterLast).toBe(1)
  })

  it.each([[[]], [[30]], [[30, 32]]])('fewer than 3 revisions (%j) → not enough data', (means) => {
    const f = forecast(revisions(means), { comparator: 'atLeast', threshold: 40 })
    expect(f).toMatchObject({ status: 'not-enough-data', slope: null, crossesAt: null, line: [] })
  })

  it('refuses a between target without an upper threshold', () => {
    expect(() => forecast(revisions([1, 2, 3]), { comparator: 'between', threshold: 5 })).toThrow(RangeError)
  })
})

describe('forecastOfHistory', () => {
  const revs = ['R1', 'R2', 'R3', 'R4', 'R5']

  it('places the means on the build\'s revisions and names the revision where the line meets the threshold', () => {
    // Means 30, 32, 34 on R2–R4 (positions 1–3): y = 28 + 2x reaches 40 at x = 6, three after R4;
    // position 6 is past R5, so its label is guessed from R5: R7. Exact line, worked by hand.
    const f = forecastOfHistory([{ revision: 'R2', mean: 30 }, { revision: 'R3', mean: 32 }, { revision: 'R4', mean: 34 }], revs, { comparator: 'atLeast', threshold: 40 })
    expect(f).toMatchObject({ status: 'converging', n: 3, crossesAfterLast: 3, crossesAt: 'R7', caveat: 'a straight line through 3 points' })
    expect(f.slope).toBeCloseTo(2, 12)
    expect(f.line[0]).toEqual({ index: 1, value: 30 })
  })

  it('an existing revision when the line meets the threshold before the build\'s last one', () => {
    // y = 28 + 2x on R1–R3 (0, 1, 2) reaches 34 at x = 3: R4, which exists but has no reading yet
    const f = forecastOfHistory([{ revision: 'R1', mean: 28 }, { revision: 'R2', mean: 30 }, { revision: 'R3', mean: 32 }], revs, { comparator: 'atLeast', threshold: 34 })
    expect(f.crossesAt).toBe('R4')
  })

  it('says what it lacks with fewer than 3 means', () => {
    const f = forecastOfHistory([{ revision: 'R1', mean: 1 }, { revision: 'R2', mean: 2 }], revs, { comparator: 'atLeast', threshold: 5 })
    expect(f).toMatchObject({ status: 'not-enough-data', crossesAt: null, caveat: 'needs a mean on at least 3 revisions (has 2)' })
  })

  it.each([
    [['R1', 'R2'], 4, 'R5'],
    [['A-09'], 2, 'A-11'],
    [['proto'], 1, '1 after proto'],
    [['R1'], 0, 'R1'],
  ])('labelAt(%j, %i) = %s', (labels, index, expected) => {
    expect(labelAt(labels, index)).toBe(expected)
  })
})
