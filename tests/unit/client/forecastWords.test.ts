import { describe, expect, it } from 'vitest'
import type { ForecastView } from '../../../shared/utils/forecast'
import { forecastWords } from '../../../utils/forecastWords'

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
