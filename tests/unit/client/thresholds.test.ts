import { describe, expect, it } from 'vitest'
import { thresholdText, thresholdWords } from '../../../utils/thresholds'

const M = '\u2212'

describe('thresholdText and thresholdWords', () => {
  it.each([
    [{ comparator: 'atLeast', threshold: 40, unit: 'N·m' }, '≥ 40 N·m', 'at least 40 N·m'],
    [{ comparator: 'atMost', threshold: 4.2, unit: 'kg' }, '≤ 4.2 kg', 'at most 4.2 kg'],
    [{ comparator: 'between', threshold: 24, thresholdHigh: 25, unit: 'km/h' }, '24–25 km/h', 'between 24 and 25 km/h'],
    [{ comparator: 'atLeast', threshold: -20, unit: '°C' }, `≥ ${M}20 °C`, `at least ${M}20 °C`],
    [{ comparator: 'atMost', threshold: 0.000123456, unit: 'A' }, '≤ 0.0001235 A', 'at most 0.0001235 A'],
  ] as const)('%j → %s / %s', (rule, text, words) => {
    expect(thresholdText(rule)).toBe(text)
    expect(thresholdWords(rule)).toBe(words)
  })
})
