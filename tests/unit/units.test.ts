import { describe, expect, it } from 'vitest'
import {
  QUANTITY_LABELS, SI_UNIT, UnitError, assertSameQuantity, diffFromSI, diffToSI, fromSI, listUnits,
  math, parseUnit, toSI, unitForMath, type Quantity,
} from '../../shared/utils/units'

function expectRelative(actual: number, expected: number, tolerance: number) {
  const rel = Math.abs(actual - expected) / Math.abs(expected)
  expect(rel, `${actual} vs ${expected}`).toBeLessThanOrEqual(tolerance)
}

// Exact definitions (NIST SP 811 (2008), B.8 and its footnotes; the 1959 yard and pound
// agreement; CGPM 1901 for standard gravity). Products of exact values are exact too.
const FOOT = 0.3048 // m, exact
const INCH = 0.0254 // m, exact
const POUND = 0.45359237 // kg, exact
const OUNCE = POUND / 16 // kg, avoirdupois ounce, exact
const GN = 9.80665 // m/s², exact
const LBF = POUND * GN // N, 4.4482216152605 exact
const OZF = OUNCE * GN // N, 0.27801385095378125 exact
const MILE = 1609.344 // m, exact (5280 ft)

describe('SI factors', () => {
  // [unit, SI value of one unit from the exact definition, SP 811 (2008) B.8 factor as
  // printed there (7 significant digits, or exact)]. The B.8 column could not be read from a copy
  // of SP 811 here. Its force, torque and pressure rows (lbf 4.448222, kgf 9.80665, ozf
  // 2.780139e-1, lbf·ft 1.355818, lbf·in 1.129848e-1, ozf·in 7.061552e-3, psi 6.894757e3) match a
  // published scrape of the B.8 table; every row is checked below to be its exact definition
  // rounded to 7 significant digits, which is how B.8 prints a factor that is not exact.
  it.each([
    ['ft', FOOT, 3.048e-1],
    ['in', INCH, 2.54e-2],
    ['lb', POUND, 4.5359237e-1],
    ['oz', OUNCE, 2.834952e-2],
    ['g', 1e-3, 1e-3],
    ['gn', GN, 9.80665],
    ['lbf', LBF, 4.448222],
    ['kgf', GN, 9.80665],
    ['ozf', OZF, 2.780139e-1],
    ['mph', MILE / 3600, 4.4704e-1],
    ['km/h', 1000 / 3600, 2.777778e-1],
    ['ft/s', FOOT, 3.048e-1],
    ['hp', 550 * FOOT * LBF, 7.456999e2], // mechanical horsepower, 550 ft·lbf/s
    ['bar', 1e5, 1e5],
    ['psi', LBF / (INCH * INCH), 6.894757e3],
    ['kPa', 1e3, 1e3],
    ['Wh', 3600, 3.6e3],
    ['kWh', 3.6e6, 3.6e6],
    ['Ah', 3600, 3.6e3],
    ['mAh', 3.6, 3.6],
    ['rpm', (2 * Math.PI) / 60, 1.047198e-1], // one revolution = 2π rad
    ['deg', Math.PI / 180, 1.745329e-2],
    ['deg/s', Math.PI / 180, 1.745329e-2],
    ['N·cm', 1e-2, 1e-2],
    ['kgf·cm', GN / 100, 9.80665e-2], // B.8 gives kilogram-force meter 9.80665 N·m
    ['lbf·ft', LBF * FOOT, 1.355818],
    ['lbf·in', LBF * INCH, 1.129848e-1],
    ['ozf·in', OZF * INCH, 7.061552e-3],
    ['min', 60, 60],
    ['h', 3600, 3.6e3],
    ['ms', 1e-3, 1e-3],
    ['mm', 1e-3, 1e-3],
    ['cm', 1e-2, 1e-2],
    ['mA', 1e-3, 1e-3],
    ['mV', 1e-3, 1e-3],
    ['kW', 1e3, 1e3],
    ['%', 1e-2, 1e-2],
  ])('%s: factor %s (exact definition, rel. error ≤ 1e-12)', (unit, exact, sp811) => {
    const info = parseUnit(unit)
    expect(info.offset).toBe(0)
    expectRelative(info.factor, exact, 1e-12)
    // A 7-digit table value agrees to half a unit in its last digit.
    expectRelative(info.factor, sp811, 5e-7)
    // and is the exact value itself (B.8 prints an exact factor in full) or that value rounded
    // to 7 significant digits
    expect([exact, Number(exact.toPrecision(7))]).toContain(sp811)
  })

  it.each([
    // Decimal expansions of the exact definitions, kept as text because some carry more
    // digits than a double holds.
    ['lbf', '4.4482216152605'], // 0.45359237 kg × 9.80665 m/s², exact
    ['ozf', '0.27801385095378125'], // lbf / 16, exact
    ['hp', '745.69987158227022'], // 550 × 0.3048 m × 4.4482216152605 N per s, exact
    ['psi', '6894.757293168361'], // 4.4482216152605 N / 0.0254² m², rounded
  ])('%s agrees with the decimal expansion %s of its definition', (unit, value) => {
    expectRelative(parseUnit(unit).factor, Number(value), 1e-12)
  })

  it.each(Object.entries(SI_UNIT))('the SI unit of %s (%s) has factor 1 and no offset', (quantity, unit) => {
    const info = parseUnit(unit)
    expect(info.quantity).toBe(quantity)
    expect(info.factor).toBe(1)
    expect(info.offset).toBe(0)
  })
})

describe('temperature is affine', () => {
  // NIST SP 811 (2008) 4.2.1.1 and B.8: t/°C = T/K − 273.15; t/°F = 1.8·(t/°C) + 32.
  it.each([
    [212, '°F', '°C', 100], // boiling point of water at 1 atm, the two scales' definitions
    [32, '°F', '°C', 0],
    [-40, '°F', '°C', -40], // the scales cross at −40
    [98.6, '°F', '°C', 37],
    [0, '°C', 'K', 273.15],
    [100, '°C', '°F', 212],
    [0, 'K', '°F', -459.67],
    [300, 'K', '°C', 26.85],
  ])('%d %s = %d %s', (value, from, to, expected) => {
    expect(fromSI(toSI(value, from), to)).toBeCloseTo(expected, 9)
  })

  it.each([
    // A temperature difference of 1 °F is 5/9 K (SP 811 B.8, "degree Fahrenheit" interval).
    ['°F', 5 / 9],
    ['°C', 1],
    ['K', 1],
  ])('a difference of 1 %s is %d K: the factor alone, no offset', (unit, kelvin) => {
    expectRelative(diffToSI(1, unit), kelvin, 1e-15)
    expectRelative(diffFromSI(kelvin, unit), 1, 1e-15)
  })
})

describe('spellings', () => {
  it.each([
    ['N*m', 'N·m'], ['N·m', 'N·m'], ['N m', 'N·m'], ['Nm', 'N·m'], ['N.m', 'N·m'], ['N-m', 'N·m'], ['N⋅m', 'N·m'],
    ['km/h', 'km/h'], ['kph', 'km/h'], ['km / h', 'km/h'],
    ['m/s^2', 'm/s²'], ['m/s2', 'm/s²'], ['m/s²', 'm/s²'], ['m s^-2', 'm/s²'],
    ['°C', '°C'], ['degC', '°C'], ['℃', '°C'], ['º C', '°C'], ['°F', '°F'], ['degF', '°F'],
    ['deg/s', 'deg/s'], ['°/s', 'deg/s'], ['°', 'deg'],
    ['lbf*ft', 'lbf·ft'], ['lbf·ft', 'lbf·ft'], ['ft·lbf', 'lbf·ft'], ['lbf-ft', 'lbf·ft'], ['ft lbf', 'lbf·ft'],
    ['kgf·cm', 'kgf·cm'], ['kgf*cm', 'kgf·cm'], ['ozf·in', 'ozf·in'], ['in*ozf', 'ozf·in'],
    ['RPM', 'rpm'], ['rev/min', 'rpm'], ['lbs', 'lb'], ['hr', 'h'], ['  mA ', 'mA'], ['kW·h', 'kWh'],
    ['percent', '%'], ['gn', 'gn'],
  ])('"%s" is read as %s', (text, canonical) => {
    expect(parseUnit(text).unit).toBe(canonical)
  })

  // Ambiguous or wrong-by-convention spellings are refused rather than guessed (common
  // practice, no source): fps (feet or frames per second), kg·cm (a mass times a length),
  // G (gauss, giga- or gravity), MA/MV (mega-, not milli-), C for a temperature (coulomb).
  it.each(['fps', 'kg·cm', 'G', 'MA', 'xyz', 'ft·lb', 'deg C'])('"%s" is refused as unknown', (text) => {
    expect(() => parseUnit(text)).toThrow(UnitError)
    expect(() => parseUnit(text)).toThrow(`Unknown unit "${text}"`)
    try {
      parseUnit(text)
    }
    catch (e) {
      expect((e as UnitError).code).toBe('unknown')
    }
  })

  it('an empty unit is refused', () => {
    expect(() => parseUnit('  ')).toThrow(UnitError)
  })

  it('C alone is the coulomb, not a temperature', () => {
    expect(parseUnit('C').quantity).toBe('charge')
  })
})

describe('quantities', () => {
  // The units docs/computation.md §Units lists as accepted (each quantity at least these).
  const required: Record<Quantity, string[]> = {
    velocity: ['m/s', 'km/h', 'mph', 'ft/s'],
    mass: ['kg', 'g', 'lb', 'oz'],
    force: ['N', 'kgf', 'lbf'],
    torque: ['N·m', 'N·cm', 'kgf·cm', 'lbf·ft', 'ozf·in'],
    current: ['A', 'mA'],
    voltage: ['V', 'mV'],
    power: ['W', 'kW', 'hp'],
    energy: ['J', 'Wh', 'kWh'],
    charge: ['C', 'mAh', 'Ah'],
    angularSpeed: ['rpm', 'rad/s', 'deg/s'],
    length: ['m', 'cm', 'mm', 'in', 'ft'],
    time: ['s', 'ms', 'min', 'h'],
    angle: ['deg', 'rad'],
    frequency: ['Hz'],
    temperature: ['°C', 'K', '°F'],
    pressure: ['Pa', 'kPa', 'bar', 'psi'],
    acceleration: ['m/s²', 'gn'],
    dimensionless: ['%', 'count'],
  }

  it.each(Object.entries(required))('%s lists %j', (quantity, units) => {
    const listed = listUnits(quantity as Quantity).map(u => u.unit)
    expect(listed).toEqual(expect.arrayContaining(units))
    for (const u of units) expect(parseUnit(u).quantity).toBe(quantity)
    expect(QUANTITY_LABELS[quantity as Quantity]).toBeTruthy()
  })

  it('lists every unit once when no quantity is given', () => {
    const all = listUnits().map(u => u.unit)
    expect(new Set(all).size).toBe(all.length)
    expect(all).toEqual(expect.arrayContaining(Object.values(required).flat()))
  })

  it.each([
    // entered, target, message
    ['lb', 'N·m', '"lb" is a mass unit; this target is measured in torque'],
    ['J', 'N·m', '"J" is an energy unit; this target is measured in torque'], // same dimension, other quantity
    ['N·m', 'kWh', '"N·m" is a torque unit; this target is measured in energy'],
    ['Hz', 'rpm', '"Hz" is a frequency unit; this target is measured in angular speed'],
    ['rpm', 'Hz', '"rpm" is an angular speed unit; this target is measured in frequency'],
    ['mph', 'gn', '"mph" is a velocity unit; this target is measured in acceleration'],
  ])('%s for a %s target is refused', (entered, target, message) => {
    expect(() => assertSameQuantity(entered, target)).toThrow(message)
    try {
      assertSameQuantity(entered, target)
    }
    catch (e) {
      expect(e).toBeInstanceOf(UnitError)
      expect((e as UnitError).code).toBe('dimension')
    }
  })

  it('an unknown unit is reported as unknown, not as a dimension error', () => {
    expect(() => assertSameQuantity('fps', 'm/s')).toThrow('Unknown unit "fps"')
  })

  it.each([
    ['mph', 'km/h'], ['lbf·ft', 'N·m'], ['°F', '°C'], ['mAh', 'C'], ['deg/s', 'rpm'],
  ])('%s for a %s target is accepted', (entered, target) => {
    const { entered: e, target: t } = assertSameQuantity(entered, target)
    expect(e.quantity).toBe(t.quantity)
  })
})

describe('round trips and mathjs', () => {
  const values = [-273.15, -40, 0, 0.001, 1, 37.5, 1234.5678]

  it.each(listUnits().map(u => [u.unit]))('%s: fromSI(toSI(x)) = x and diffFromSI(diffToSI(d)) = d', (unit) => {
    for (const x of values) {
      expect(fromSI(toSI(x, unit), unit)).toBeCloseTo(x, 9)
      expect(diffFromSI(diffToSI(x, unit), unit)).toBeCloseTo(x, 9)
    }
  })

  it.each(listUnits().map(u => [u.unit]))('%s: the mathjs spelling parses and means the same unit', (unit) => {
    const info = parseUnit(unit)
    const spelling = unitForMath(unit)
    expect(math.unit(7, spelling).toSI().toNumber()).toBeCloseTo(toSI(7, unit), 9)
    // It also survives an expression (where `in` and `min` alone would be read as operators).
    expect(() => math.evaluate(`2 ${spelling}`)).not.toThrow()
    expect(info.factor).toBeGreaterThan(0)
  })

  it('a speed converts between display units through SI (1 mph = 1.609344 km/h, exact)', () => {
    // Exact: 1 mile = 1.609344 km (SP 811 B.8).
    expectRelative(fromSI(toSI(1, 'mph'), 'km/h'), 1.609344, 1e-12)
  })
})
