import { describe, expect, it } from 'vitest'
import { cautionText } from '../../../utils/cautionText'

// Every caution defers to local codes and licensed practice, whatever the quantity.
describe('cautionText', () => {
  it.each([
    ['voltage', 'Voltage can shock; mains and high voltage can kill.'],
    ['angularSpeed', 'Spinning parts can catch, cut and throw debris.'],
    ['temperature', 'Hot motor cases and parts can burn.'],
    ['mass', 'This test can hurt people or damage equipment.'],
    [null, 'This test can hurt people or damage equipment.'],
  ])('%s', (quantity, hazard) => {
    expect(cautionText(quantity)).toBe(`${hazard} Guard the test and follow local codes and licensed practice.`)
  })
})
