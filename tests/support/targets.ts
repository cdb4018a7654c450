import type { HistoryEntry, ScoreTarget } from '#shared/types/api'

/** One revision's pooled statistics; pass what the test is about. */
export function makeEntry(overrides: Partial<HistoryEntry> = {}): HistoryEntry {
  return {
    revision: 'R1', readings: 1, stated: 0, status: 'met', n: 5, mean: 24.5, sd: 0.2, uA: 0.09, uB: null, u: 0.09, nuEff: 4,
    ci95: [24.25, 24.75], delta: null, p: null, movement: null, real: null, reason: null,
    ...overrides,
  }
}

/** A scoreboard target with plausible defaults (a top speed of at least 24 km/h, no readings). */
export function makeScoreTarget(overrides: Partial<ScoreTarget> = {}): ScoreTarget {
  return {
    id: '00000000-0000-4000-8000-00000000aa01',
    key: 'top-speed',
    name: 'Top speed',
    unit: 'km/h',
    quantity: 'velocity',
    quantityLabel: 'Speed',
    comparator: 'atLeast',
    threshold: 24,
    thresholdHigh: null,
    stretch: null,
    noiseBand: null,
    notes: '',
    position: 0,
    archived: false,
    caution: false,
    hazard: null,
    derived: false,
    formula: null,
    model: null,
    status: 'untested',
    latest: null,
    margin: null,
    history: [],
    cantEvaluate: [],
    forecast: { status: 'not-enough-data', n: 0, slope: null, crossesAfterLast: null, crossesAt: null, line: [], caveat: 'fewer than 3 revisions with a value' },
    ...overrides,
  }
}
