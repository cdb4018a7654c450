import { describe, expect, it } from 'vitest'
import { nextRevisionLabel } from '../../../utils/revisionLabels'

describe('nextRevisionLabel', () => {
  it.each([
    [[], 'R1'],
    [['R1', 'R2', 'R4'], 'R5'],
    [['proto 9'], 'proto 10'],
    [['EVT-07'], 'EVT-8'], // the number is counted, not zero-padded
    [['R1', 'final'], ''], // no number at the end: the user names it
  ] as const)('after %j: %j', (labels, next) => {
    expect(nextRevisionLabel(labels)).toBe(next)
  })
})
