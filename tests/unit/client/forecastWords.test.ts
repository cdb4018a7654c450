import { describe, expect, it } from 'vitest'
import type { ForecastView } from '#shared/utils/forecast'
import { axisLabel, forecastCrossing, forecastWords } from '../../../utils/forecastWords'

const view = (over: Partial<ForecastView>): ForecastView => ({
  status: 'not-enough-data', n: 0, slope: null, crossesAfterLast: null, crossesAt: null, line: [], caveat: '', ...over,
})

describe('forecastWords', () => {
  it.each([
    [view({ status: 'converging', crossesAt: 'R7', crossesAfterLast: 2 }), 'meets it at R7'],
    [view({ status: 'converging', crossesAt: null, crossesAfterLast: 3 }), 'meets it 3 revisions on'],
    [view({ status: 'not-converging' }), 'not converging'],
    [view({ status: 'already-met' }), 'latest mean on the good side'],
    [view({ status: 'not-enough-data' }), 'not enough revisions yet'],
  ])('%j', (f, text) => {
    expect(forecastWords(f)).toBe(text)
  })
})

// Where the straight line of forecast() meets the target; the crossing revisions are worked by hand
// from the line (shared/utils/forecast.ts is tested against NIST StRD in forecast.test.ts).
describe('forecastCrossing', () => {
  const speed = { comparator: 'atLeast' as const, threshold: 25, unit: 'm/s' }
  it.each([
    [view({ status: 'converging', slope: 1, crossesAt: 'R7', crossesAfterLast: 2 }), speed, 'crosses 25 m/s at ≈R7'],
    [view({ status: 'converging', slope: 1, crossesAt: null, crossesAfterLast: 3 }), speed, 'crosses 25 m/s ≈3 revisions on'],
    [view({ status: 'converging', slope: -0.2, crossesAt: '2 after final', crossesAfterLast: 2 }), { comparator: 'atMost' as const, threshold: 1.5, unit: 'kg' }, 'crosses 1.5 kg at ≈2 after final'],
    // a band: a falling line meets its high bound, a rising one its low bound
    [view({ status: 'converging', slope: -0.4, crossesAt: 'R6', crossesAfterLast: 1 }), { comparator: 'between' as const, threshold: 24, thresholdHigh: 25, unit: 'km/h' }, 'crosses 25 km/h at ≈R6'],
    [view({ status: 'converging', slope: 0.4, crossesAt: 'R6', crossesAfterLast: 1 }), { comparator: 'between' as const, threshold: 24, thresholdHigh: 25, unit: 'km/h' }, 'crosses 24 km/h at ≈R6'],
    [view({ status: 'not-converging', slope: -1 }), speed, null],
    [view({ status: 'already-met', slope: 1 }), speed, null],
    [view({ status: 'not-enough-data' }), speed, null],
  ])('%j on %j', (f, t, text) => {
    expect(forecastCrossing(f, t)).toBe(text)
  })
})

describe('axisLabel', () => {
  it.each([
    ['R3', '2026-03-12', true, ['R3', '12 Mar']],
    ['R3', '2026-03-12T23:30:00Z', true, ['R3', '12 Mar']], // the day in UTC, as every date in Ratchet
    ['R3', '2026-03-12', false, 'R3'], // no room: the label alone
    ['R7', null, true, 'R7'], // a revision the forecast reaches has no date yet
    ['R2', 'not a date', true, 'R2'],
    ['', '2026-03-12', true, ''],
  ] as const)('%s %s %s', (label, builtOn, withDates, shown) => {
    expect(axisLabel(label, builtOn, withDates)).toEqual(shown)
  })
})
