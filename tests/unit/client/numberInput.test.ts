import { describe, expect, it } from 'vitest'
import { parseNumber, parseSamples } from '../../../utils/numberInput'

describe('parseNumber', () => {
  it.each([
    ['24.5', 24.5],
    ['  24.5 ', 24.5],
    ['-0.25', -0.25],
    ['\u22120.25', -0.25], // a minus sign pasted from a document
    ['+3', 3],
    ['.5', 0.5],
    ['5.', 5],
    ['1.2e-3', 0.0012],
    ['6.02E23', 6.02e23],
    [7, 7],
  ] as const)('%j → %s', (text, x) => {
    expect(parseNumber(text)).toBe(x)
  })

  it.each(['', '   ', null, undefined])('empty %j → null', (text) => {
    expect(parseNumber(text)).toBeNull()
  })

  // a decimal comma, thousands separators, units and hex are refused rather than guessed at
  it.each(['24,5', '1 000', '12 mm', '0x10', 'e5', '1e', '--1', 'NaN', 'Infinity', Number.POSITIVE_INFINITY])('%j → NaN', (text) => {
    expect(parseNumber(text)).toBeNaN()
  })
})

describe('parseSamples', () => {
  it.each([
    ['24.1\n24.3\n24.2', [24.1, 24.3, 24.2], []],
    ['24.1, 24.3; 24.2', [24.1, 24.3, 24.2], []],
    ['24.1\t24.3\t24.2\n', [24.1, 24.3, 24.2], []], // a spreadsheet row
    ['\n\n  ', [], []],
    ['24.1\nabc\n24.2\n1O.5', [24.1, 24.2], ['abc', '1O.5']],
  ] as const)('%j', (text, values, bad) => {
    expect(parseSamples(text)).toEqual({ values, bad })
  })
})
