import { describe, expect, it } from 'vitest'
import {
  QUANTITY_LABELS, SI_UNIT, UnitError, assertSameQuantity, conversionText, diffFromSI, diffToSI, fromSI, listUnits,
  math, parseUnit, quantityLabel, siUnitOf, toSI, unitForMath, type Quantity,
} from '#shared/utils/units'

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

  // Spellings mathjs would read but that people type meaning something else are refused with
  // the spelling to use (common practice, no source): kg·cm (a mass times a length, meant as
  // kgf·cm), ft·lb (pound mass), deg C (a degree times a coulomb), MA (mega-, meant as milli-),
  // G (meant as standard gravity).
  it.each([
    ['kg·cm', 'kgf·cm'], ['G', 'gn'], ['MA', 'mA'], ['ft·lb', 'lbf·ft'], ['deg C', '°C'], ['lb in', 'lbf·in'],
  ])('"%s" is refused as ambiguous, pointing to %s', (text, instead) => {
    expect(() => parseUnit(text)).toThrow(`Ambiguous unit "${text}"`)
    expect(() => parseUnit(text)).toThrow(instead)
  })

  it.each(['fps', 'xyz'])('"%s" is refused as unknown', (text) => {
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

describe('open unit expressions', () => {
  // Exact decimal definitions, as text, from NIST SP 811 (2008) appendix B.8 and the SI
  // Brochure (9th ed., 2019): prefixes are exact powers of ten; 1 in = 0.0254 m, 1 ft = 0.3048 m,
  // 1 lb = 0.45359237 kg, gn = 9.80665 m/s², 1 L = 1e-3 m³ (1964 CGPM), 1 h = 3600 s,
  // 1 min = 60 s, 1 bar = 1e5 Pa, 1 U.S. gallon = 231 in³, 1 byte = 8 bit (IEC 80000-13).
  // Each expected factor below is the exact rational value of 1 `from` in `to`, computed
  // with fractions from those decimals, so the only rounding is the final conversion to a double.
  const F = (x: string | number) => math.fraction(String(x))
  const LB = F('0.45359237')
  const GN_ = F('9.80665')
  const LBF_ = LB.mul(GN_)
  const OZF_ = LBF_.div(F(16))
  const IN = F('0.0254')
  const FT = F('0.3048')
  const GAL = IN.pow(3).mul(F(231))

  it.each([
    // [from, to, exact value of 1 from in to]
    ['km/s', 'm/s', F(1000)],
    ['km/s', 'km/h', F(3600)],
    ['N/mm', 'N/m', F(1000)],
    ['lbf/in', 'N/mm', LBF_.div(IN).div(F(1000))], // 0.175126835246476…
    ['lbf/in', 'N/m', LBF_.div(IN)],
    ['kN/m', 'N/mm', F(1)],
    ['Wh/kg', 'J/kg', F(3600)],
    ['Wh/kg', 'J/g', F('3.6')],
    ['kWh/kg', 'Wh/kg', F(1000)],
    ['J/g', 'J/kg', F(1000)],
    ['mAh', 'C', F('3.6')],
    ['mAh', 'Ah', F('0.001')],
    ['kohm', 'Ω', F(1000)],
    ['kΩ', 'MΩ', F('0.001')],
    ['mΩ', 'Ω', F('0.001')],
    ['uF', 'F', F('0.000001')],
    ['µF', 'nF', F(1000)],
    ['nF', 'pF', F(1000)],
    ['mH', 'µH', F(1000)],
    ['L/min', 'm³/s', F('0.001').div(F(60))],
    ['L/min', 'm^3/h', F('0.06')],
    ['m³/h', 'L/min', F(1000).div(F(60))],
    ['gal/min', 'L/min', GAL.mul(F(1000))], // 3.785411784 L/min
    ['g/cm^3', 'kg/m³', F(1000)],
    ['g/cm³', 'g/mL', F(1)],
    ['MPa', 'N/mm²', F(1)],
    ['MPa', 'psi', F(1000000).div(LBF_.div(IN.pow(2)))],
    ['GPa', 'MPa', F(1000)],
    ['bar', 'kPa', F(100)],
    ['mN*m', 'N·m', F('0.001')],
    ['mN·m', 'ozf·in', F('0.001').div(OZF_.mul(IN))],
    ['ozf*in', 'N·m', OZF_.mul(IN)], // 7.0615518142…e-3
    ['lbf·ft', 'N·m', LBF_.mul(FT)],
    ['kN·m', 'lbf·ft', F(1000).div(LBF_.mul(FT))],
    ['N·mm', 'N·cm', F('0.1')],
    ['mm²', 'm²', F('0.000001')],
    ['cm²', 'mm²', F(100)],
    ['cm³', 'mL', F(1)],
    ['L', 'cm³', F(1000)],
    ['kg·m²', 'g·cm²', F(10000000)],
    ['N·s', 'lbf·s', F(1).div(LBF_)],
    ['kB', 'bit', F(8000)],
    ['Mbit/s', 'kbit/s', F(1000)],
    ['mPa·s', 'Pa·s', F('0.001')],
    ['W/kg', 'kW/kg', F('0.001')],
    ['K/W', '°C/W', F(1)],
    ['rpm', 'rev/s', F(1).div(F(60))],
    ['kip', 'lbf', F(1000)],
    ['kgf/cm²', 'kPa', GN_.mul(F(10000)).div(F(1000))], // 98.0665 kPa
    ['ppm', '%', F('0.0001')],
  ] as const)('1 %s = %s %s (SP 811 definitions, rel. error ≤ 1e-12)', (from, to, exact) => {
    const { entered, target } = assertSameQuantity(from, to)
    expect(entered.offset).toBe(0)
    expectRelative(entered.factor / target.factor, exact.valueOf(), 1e-12)
    expectRelative(fromSI(toSI(1, from), to), exact.valueOf(), 1e-12)
  })

  it.each([
    // typed, canonical, quantity
    ['km/s', 'km/s', 'velocity'],
    ['N/mm', 'N/mm', 'stiffness'],
    ['lbf/in', 'lbf/in', 'stiffness'],
    ['Wh/kg', 'Wh/kg', 'specificEnergy'],
    ['Ω', 'Ω', 'resistance'],
    ['ohm', 'Ω', 'resistance'],
    ['kohm', 'kΩ', 'resistance'],
    ['uF', 'µF', 'capacitance'],
    ['μF', 'µF', 'capacitance'], // Greek mu typed for the micro sign
    ['mH', 'mH', 'inductance'],
    ['L/min', 'L/min', 'flowRate'],
    ['m3/h', 'm³/h', 'flowRate'],
    ['m³/h', 'm³/h', 'flowRate'],
    ['g/cm^3', 'g/cm³', 'density'],
    ['MPa', 'MPa', 'pressure'],
    ['mN*m', 'mN·m', 'torque'],
    ['mN m', 'mN·m', 'torque'],
    ['ozf*in', 'ozf·in', 'torque'],
    ['kg m^2', 'kg·m²', 'momentOfInertia'],
    ['m^2', 'm²', 'area'],
    ['m²', 'm²', 'area'],
    ['cm^3', 'cm³', 'volume'],
    ['K/W', 'K/W', 'thermalResistance'],
    ['W/(m*K)', 'W/(m·K)', 'thermalConductivity'],
    ['kbps', 'kbit/s', 'dataRate'],
    ['rad/s^2', 'rad/s²', 'angularAcceleration'],
    ['N*s', 'N·s', 'impulse'],
    ['1/s', '1/s', 'frequency'],
    ['s^-1', '1/s', 'frequency'],
    ['N/s', 'N/s', 'dim:kg·m/s³'],
    ['1/mm', '1/mm', 'dim:1/m'],
    ['V/Hz^0.5', 'V/Hz^0.5', 'dim:kg·m²/(s^2.5·A)'],
    ['((m))', 'm', 'length'],
  ])('"%s" reads as %s, %s', (text, canonical, quantity) => {
    const u = parseUnit(text)
    expect(u.unit).toBe(canonical)
    expect(u.quantity).toBe(quantity)
    // the canonical spelling reads back as the same unit
    expect(parseUnit(u.unit)).toMatchObject({ unit: canonical, quantity, factor: u.factor })
  })

  it('names an unnamed quantity by its dimension in SI base units', () => {
    expect(quantityLabel('dim:kg·m/s³')).toBe('dimension kg·m/s³')
    expect(siUnitOf('dim:kg·m/s³')).toBe('kg·m/s³')
    expect(quantityLabel('stiffness')).toBe('stiffness')
    expect(siUnitOf('resistance')).toBe('Ω')
  })

  it.each([
    // entered, target: same dimension (or none shared), another quantity
    ['J', 'mN·m', '"J" is an energy unit; this target is measured in torque (mN·m)'],
    ['kJ', 'kN·m', 'this target is measured in torque'],
    ['mN·m', 'Wh', '"mN·m" is a torque unit; this target is measured in energy (Wh)'],
    ['kg m^2/s^2', 'N·m', '"kg m^2/s^2" is an energy unit'], // no force times a length: an energy
    ['Hz', 'rev/s', '"Hz" is a frequency unit; this target is measured in angular speed'],
    ['1/min', 'rpm', 'this target is measured in angular speed'],
    ['rpm', 'kHz', '"rpm" is an angular speed unit; this target is measured in frequency'],
    ['N/mm', 'N', '"N/mm" is a stiffness unit; this target is measured in force (N)'],
    ['kΩ', 'S', '"kΩ" is a resistance unit; this target is measured in conductance (S)'],
    ['N/s', 'W', '"N/s" is a unit of dimension kg·m/s³; this target is measured in power (W)'],
    ['µF', 'mH', 'this target is measured in inductance'],
    ['L', 'kg', '"L" is a volume unit; this target is measured in mass'],
  ])('%s for a %s target is refused', (entered, target, message) => {
    expect(() => assertSameQuantity(entered, target)).toThrow(message)
    try {
      assertSameQuantity(entered, target)
    }
    catch (e) {
      expect((e as UnitError).code).toBe('dimension')
    }
  })

  it('shows a conversion for the picker', () => {
    // 1 lbf/in = 4.4482216152605 N / 25.4 mm = 0.17512683… N/mm (SP 811 definitions)
    expect(conversionText('lbf/in', 'N/mm')).toBe('1 lbf/in = 0.175127 N/mm')
    expect(conversionText('kohm', 'Ω')).toBe('1 kΩ = 1000 Ω')
    expect(() => conversionText('kohm', 'F')).toThrow(UnitError)
  })
})

describe('hostile unit text', () => {
  // Only mathjs's unit parser sees the text: it reads names, prefixes, powers, * / and
  // parentheses into a product of units. Nothing is evaluated, so no text can run code.
  it.each([
    ['x'.repeat(10_000), 'at most 30 characters'],
    [`${'('.repeat(14)}m${')'.repeat(14)}x`, 'Unknown unit'],
    ['1/0', 'Unknown unit'],
    ['sin(m)', '"sin" is not a unit'],
    ['import(m)', 'Unknown unit'],
    ['evaluate(m)', 'Unknown unit'],
    ['m; s', 'Unknown unit'],
    ['[m]', 'Unknown unit'],
    ['m = 1', 'Unknown unit'],
    ['f(x) = x', 'Unknown unit'],
    ['constructor', 'Unknown unit'],
    ['__proto__', 'Unknown unit'],
    ['toString', 'Unknown unit'],
    ['5 m', 'a unit holds no number'],
    ['m^1e308', 'Unknown unit'],
    ['m^99', 'a power is a whole or half number'],
    ['m^0.3', 'a power is a whole or half number'],
    ['m\u0000', 'Unknown unit'],
    ['"m"', 'Unknown unit'],
    ['m + s', 'Unknown unit'],
  ])('%j is refused: %s', (text, message) => {
    expect(() => parseUnit(text)).toThrow(UnitError)
    expect(() => parseUnit(text)).toThrow(message)
  })

  it('reads deeply nested parentheses within the length limit', () => {
    expect(parseUnit(`${'('.repeat(14)}m${')'.repeat(14)}`).unit).toBe('m')
  })

  it('does not change the shared unit system when refusing text', () => {
    const before = Object.keys(math.Unit.UNITS).length
    for (const t of ['createUnit(x)', 'x = 1 m', 'm^2 = 3']) expect(() => parseUnit(t)).toThrow(UnitError)
    expect(Object.keys(math.Unit.UNITS).length).toBe(before)
  })
})

describe('stored units keep their meaning', () => {
  // The canonical spellings and quantities of every unit accepted before units were opened;
  // targets and readings store these, so each must read back as itself, of the same quantity.
  it.each([
    ['m/s', 'velocity'], ['km/h', 'velocity'], ['mph', 'velocity'], ['ft/s', 'velocity'], ['kg', 'mass'], ['g', 'mass'],
    ['lb', 'mass'], ['oz', 'mass'], ['N', 'force'], ['kgf', 'force'], ['lbf', 'force'], ['ozf', 'force'],
    ['N·m', 'torque'], ['N·cm', 'torque'], ['kgf·cm', 'torque'], ['lbf·ft', 'torque'], ['lbf·in', 'torque'],
    ['ozf·in', 'torque'], ['A', 'current'], ['mA', 'current'], ['V', 'voltage'], ['mV', 'voltage'], ['kV', 'voltage'],
    ['W', 'power'], ['kW', 'power'], ['hp', 'power'], ['J', 'energy'], ['kJ', 'energy'], ['Wh', 'energy'],
    ['kWh', 'energy'], ['C', 'charge'], ['mAh', 'charge'], ['Ah', 'charge'], ['rpm', 'angularSpeed'],
    ['rad/s', 'angularSpeed'], ['deg/s', 'angularSpeed'], ['m', 'length'], ['cm', 'length'], ['mm', 'length'],
    ['km', 'length'], ['in', 'length'], ['ft', 'length'], ['s', 'time'], ['ms', 'time'], ['min', 'time'], ['h', 'time'],
    ['deg', 'angle'], ['rad', 'angle'], ['Hz', 'frequency'], ['kHz', 'frequency'], ['°C', 'temperature'],
    ['K', 'temperature'], ['°F', 'temperature'], ['Pa', 'pressure'], ['kPa', 'pressure'], ['MPa', 'pressure'],
    ['bar', 'pressure'], ['psi', 'pressure'], ['m/s²', 'acceleration'], ['gn', 'acceleration'],
    ['%', 'dimensionless'], ['count', 'dimensionless'],
  ])('%s is still %s', (unit, quantity) => {
    const u = parseUnit(unit)
    expect(u.unit).toBe(unit)
    expect(u.quantity).toBe(quantity)
  })
})

describe('conversion text', () => {
  it.each([
    ['kWh', 'J', '1 kWh = 3.6e6 J'], // 1 kWh = 3.6 MJ (SP 811 B.8)
    ['nF', 'F', '1 nF = 1e-9 F'],
    ['mm', 'm', '0.001'],
  ])('1 %s in %s reads "%s"', (from, to, text) => {
    expect(conversionText(from, to)).toContain(text)
  })
})
