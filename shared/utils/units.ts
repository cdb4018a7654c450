// Units of measure: which spellings Ratchet accepts, which quantity each one measures, and
// how a value converts to and from SI. The conversion factors come from mathjs's unit system;
// units mathjs lacks are defined below from their definitions, never from typed-in factors.
// The quantity comes from the table, not from the dimension: N·m (torque) and J (energy)
// share a dimension but a torque target refuses J; likewise rpm and Hz.

import { all, create } from 'mathjs'

export type Quantity
  = | 'velocity' | 'mass' | 'force' | 'torque' | 'current' | 'voltage' | 'power' | 'energy'
    | 'charge' | 'angularSpeed' | 'length' | 'time' | 'angle' | 'frequency' | 'temperature'
    | 'pressure' | 'acceleration' | 'dimensionless'

export const QUANTITY_LABELS: Record<Quantity, string> = {
  velocity: 'velocity',
  mass: 'mass',
  force: 'force',
  torque: 'torque',
  current: 'current',
  voltage: 'voltage',
  power: 'power',
  energy: 'energy',
  charge: 'charge',
  angularSpeed: 'angular speed',
  length: 'length',
  time: 'time',
  angle: 'angle',
  frequency: 'frequency',
  temperature: 'temperature',
  pressure: 'pressure',
  acceleration: 'acceleration',
  dimensionless: 'dimensionless',
}

export interface UnitInfo {
  /** Canonical display spelling, e.g. 'N·m', 'km/h', '°C'. */
  unit: string
  quantity: Quantity
  /** SI value of one unit taken as a difference (spreads, uncertainties, deltas). */
  factor: number
  /** SI = value·factor + offset; non-zero only for the affine temperature scales. */
  offset: number
  /** Name for a picker, e.g. 'newton metre'. */
  label: string
}

export class UnitError extends Error {
  readonly code: 'unknown' | 'dimension'

  constructor(code: 'unknown' | 'dimension', message: string) {
    super(message)
    this.name = 'UnitError'
    this.code = code
  }
}

/** The mathjs instance every unit goes through; a formula module evaluates with it too. */
export const math = create(all!, {})

math.createUnit({
  // Standard gravity, an exact conventional value (CGPM 1901; NIST SP 811 B.8).
  gn: '9.80665 m/s^2',
  // Ounce-force: the weight of one avoirdupois ounce under standard gravity.
  ozf: '1 oz gn',
  // One revolution per minute; mathjs's `cycle` is one turn, 2π rad.
  rpm: '1 cycle/min',
  mph: '1 mi/h',
  percent: { definition: '0.01' },
  // The unit one, for counts; dimensionless, so it evaluates to a plain number.
  one: { definition: '1' },
})
math.createUnit({
  // Mechanical horsepower is defined as 550 ft·lbf/s; psi as lbf/in². mathjs carries
  // rounded values for both, so they are redefined from the definitions.
  hp: '550 ft lbf/s',
  psi: '1 lbf/in^2',
}, { override: true })

interface UnitDef {
  unit: string
  quantity: Quantity
  label: string
  /** Spelling mathjs parses, in a unit string and in an expression. */
  math: string
  /** Other accepted spellings; each is normalised the same way as user input. */
  aliases?: string[]
}

const DEFS: UnitDef[] = [
  { unit: 'm/s', quantity: 'velocity', label: 'metre per second', math: 'm/s', aliases: ['m/sec', 'm s^-1'] },
  { unit: 'km/h', quantity: 'velocity', label: 'kilometre per hour', math: 'km/h', aliases: ['kph', 'kmh', 'kmph', 'km/hr'] },
  { unit: 'mph', quantity: 'velocity', label: 'mile per hour', math: 'mph', aliases: ['mi/h', 'mi/hr'] },
  { unit: 'ft/s', quantity: 'velocity', label: 'foot per second', math: 'ft/s', aliases: ['ft/sec'] },

  { unit: 'kg', quantity: 'mass', label: 'kilogram', math: 'kg' },
  { unit: 'g', quantity: 'mass', label: 'gram', math: 'g' },
  { unit: 'lb', quantity: 'mass', label: 'pound', math: 'lb', aliases: ['lbs', 'lbm'] },
  { unit: 'oz', quantity: 'mass', label: 'ounce', math: 'oz' },

  { unit: 'N', quantity: 'force', label: 'newton', math: 'N' },
  { unit: 'kgf', quantity: 'force', label: 'kilogram-force', math: 'kgf' },
  { unit: 'lbf', quantity: 'force', label: 'pound-force', math: 'lbf' },
  { unit: 'ozf', quantity: 'force', label: 'ounce-force', math: 'ozf' },

  { unit: 'N·m', quantity: 'torque', label: 'newton metre', math: 'N m', aliases: ['Nm'] },
  { unit: 'N·cm', quantity: 'torque', label: 'newton centimetre', math: 'N cm', aliases: ['Ncm'] },
  { unit: 'kgf·cm', quantity: 'torque', label: 'kilogram-force centimetre', math: 'kgf cm', aliases: ['kgfcm'] },
  { unit: 'lbf·ft', quantity: 'torque', label: 'pound-force foot', math: 'lbf ft', aliases: ['ft·lbf'] },
  { unit: 'lbf·in', quantity: 'torque', label: 'pound-force inch', math: 'lbf inch', aliases: ['in·lbf'] },
  { unit: 'ozf·in', quantity: 'torque', label: 'ounce-force inch', math: 'ozf inch', aliases: ['in·ozf'] },

  { unit: 'A', quantity: 'current', label: 'ampere', math: 'A' },
  { unit: 'mA', quantity: 'current', label: 'milliampere', math: 'mA' },

  { unit: 'V', quantity: 'voltage', label: 'volt', math: 'V' },
  { unit: 'mV', quantity: 'voltage', label: 'millivolt', math: 'mV' },
  { unit: 'kV', quantity: 'voltage', label: 'kilovolt', math: 'kV' },

  { unit: 'W', quantity: 'power', label: 'watt', math: 'W' },
  { unit: 'kW', quantity: 'power', label: 'kilowatt', math: 'kW' },
  { unit: 'hp', quantity: 'power', label: 'horsepower (mechanical)', math: 'hp' },

  { unit: 'J', quantity: 'energy', label: 'joule', math: 'J' },
  { unit: 'kJ', quantity: 'energy', label: 'kilojoule', math: 'kJ' },
  { unit: 'Wh', quantity: 'energy', label: 'watt hour', math: 'Wh', aliases: ['W·h'] },
  { unit: 'kWh', quantity: 'energy', label: 'kilowatt hour', math: 'kWh', aliases: ['kW·h'] },

  { unit: 'C', quantity: 'charge', label: 'coulomb', math: 'C' },
  { unit: 'mAh', quantity: 'charge', label: 'milliampere hour', math: 'mAh', aliases: ['mA·h'] },
  { unit: 'Ah', quantity: 'charge', label: 'ampere hour', math: 'Ah', aliases: ['A·h'] },

  { unit: 'rpm', quantity: 'angularSpeed', label: 'revolution per minute', math: 'rpm', aliases: ['RPM', 'r/min', 'rev/min'] },
  { unit: 'rad/s', quantity: 'angularSpeed', label: 'radian per second', math: 'rad/s', aliases: ['rad/sec'] },
  { unit: 'deg/s', quantity: 'angularSpeed', label: 'degree per second', math: 'deg/s', aliases: ['°/s', 'deg/sec'] },

  { unit: 'm', quantity: 'length', label: 'metre', math: 'm' },
  { unit: 'cm', quantity: 'length', label: 'centimetre', math: 'cm' },
  { unit: 'mm', quantity: 'length', label: 'millimetre', math: 'mm' },
  { unit: 'km', quantity: 'length', label: 'kilometre', math: 'km' },
  { unit: 'in', quantity: 'length', label: 'inch', math: 'inch', aliases: ['inch'] },
  { unit: 'ft', quantity: 'length', label: 'foot', math: 'ft', aliases: ['foot', 'feet'] },

  { unit: 's', quantity: 'time', label: 'second', math: 's', aliases: ['sec'] },
  { unit: 'ms', quantity: 'time', label: 'millisecond', math: 'ms' },
  { unit: 'min', quantity: 'time', label: 'minute', math: 'minute' },
  { unit: 'h', quantity: 'time', label: 'hour', math: 'hour', aliases: ['hr'] },

  { unit: 'deg', quantity: 'angle', label: 'degree', math: 'deg', aliases: ['°', 'degree'] },
  { unit: 'rad', quantity: 'angle', label: 'radian', math: 'rad' },

  { unit: 'Hz', quantity: 'frequency', label: 'hertz', math: 'Hz', aliases: ['hz'] },
  { unit: 'kHz', quantity: 'frequency', label: 'kilohertz', math: 'kHz' },

  { unit: '°C', quantity: 'temperature', label: 'degree Celsius', math: 'degC', aliases: ['degC'] },
  { unit: 'K', quantity: 'temperature', label: 'kelvin', math: 'K' },
  { unit: '°F', quantity: 'temperature', label: 'degree Fahrenheit', math: 'degF', aliases: ['degF'] },

  { unit: 'Pa', quantity: 'pressure', label: 'pascal', math: 'Pa' },
  { unit: 'kPa', quantity: 'pressure', label: 'kilopascal', math: 'kPa' },
  { unit: 'MPa', quantity: 'pressure', label: 'megapascal', math: 'MPa' },
  { unit: 'bar', quantity: 'pressure', label: 'bar', math: 'bar' },
  { unit: 'psi', quantity: 'pressure', label: 'pound-force per square inch', math: 'psi' },

  { unit: 'm/s²', quantity: 'acceleration', label: 'metre per second squared', math: 'm/s^2', aliases: ['m/s/s', 'm s^-2'] },
  { unit: 'gn', quantity: 'acceleration', label: 'standard gravity', math: 'gn' },

  { unit: '%', quantity: 'dimensionless', label: 'percent', math: 'percent', aliases: ['percent'] },
  { unit: 'count', quantity: 'dimensionless', label: 'count', math: 'one' },
]

export const SI_UNIT: Record<Quantity, string> = {
  velocity: 'm/s',
  mass: 'kg',
  force: 'N',
  torque: 'N·m',
  current: 'A',
  voltage: 'V',
  power: 'W',
  energy: 'J',
  charge: 'C',
  angularSpeed: 'rad/s',
  length: 'm',
  time: 's',
  angle: 'rad',
  frequency: 'Hz',
  temperature: 'K',
  pressure: 'Pa',
  acceleration: 'm/s²',
  dimensionless: 'count',
}

/**
 * Reduces a typed spelling to a lookup key: compatibility forms folded (², ℃), degree signs
 * spelled `deg`, spaces dropped around `/` and `^`, an exponent digit written after a letter
 * (`m/s2`) given its `^`, and every product separator (`*`, `·`, `.`, `-`, space) made `·`.
 * Letter case is kept: mA and MA, g and G are different units.
 */
function normalize(text: string): string {
  return text
    .trim()
    .replace(/[º˚]/g, '°') // ordinal and ring signs typed for a degree sign, before NFKC folds them
    .normalize('NFKC')
    .replace(/°\s*([CF])(?![A-Za-z])/g, 'deg$1')
    .replace(/°/g, 'deg')
    .replace(/\s*([/^])\s*/g, '$1')
    .replace(/([A-Za-z])(\d)/g, '$1^$2')
    .replace(/\s*[·⋅•∙*×]\s*/g, '·')
    .replace(/(?<=[A-Za-z])[.-](?=[A-Za-z])/g, '·')
    .replace(/\s+/g, '·')
}

const TABLE: UnitInfo[] = []
const BY_KEY = new Map<string, UnitInfo>()
const MATH_SPELLING = new Map<string, string>()

for (const def of DEFS) {
  const one = math.unit(1, def.math)
  const zero = math.unit(0, def.math).toSI().toNumber()
  const si = DEFS.find(d => d.unit === SI_UNIT[def.quantity])!
  if (!one.equalBase(math.unit(1, si.math))) {
    throw new Error(`units: ${def.unit} does not have the dimension of ${si.unit}`)
  }
  // An affine scale (°C, °F) has a zero offset from SI; its factor is the size of one degree.
  const factor = zero === 0 ? one.toSI().toNumber() : Number(one.units[0]!.unit.value)
  const info: UnitInfo = Object.freeze({
    unit: def.unit, quantity: def.quantity, factor, offset: zero, label: def.label,
  })
  TABLE.push(info)
  MATH_SPELLING.set(def.unit, def.math)
  for (const spelling of [def.unit, ...(def.aliases ?? [])]) {
    const key = normalize(spelling)
    const taken = BY_KEY.get(key)
    if (taken && taken !== info) throw new Error(`units: "${spelling}" is claimed by ${taken.unit} and ${def.unit}`)
    BY_KEY.set(key, info)
  }
}

export function parseUnit(text: string): UnitInfo {
  const key = normalize(String(text ?? ''))
  if (key === '') throw new UnitError('unknown', 'A unit is required')
  const info = BY_KEY.get(key)
  if (!info) throw new UnitError('unknown', `Unknown unit "${String(text).trim()}"`)
  return info
}

/** Accepted units in picker order, optionally of one quantity only. */
export function listUnits(quantity?: Quantity): UnitInfo[] {
  return quantity ? TABLE.filter(u => u.quantity === quantity) : [...TABLE]
}

type UnitLike = string | UnitInfo

function info(unit: UnitLike): UnitInfo {
  return typeof unit === 'string' ? parseUnit(unit) : unit
}

/** A value (a mean, a threshold) to SI, with the offset of an affine scale. */
export function toSI(value: number, unit: UnitLike): number {
  const u = info(unit)
  return value * u.factor + u.offset
}

export function fromSI(si: number, unit: UnitLike): number {
  const u = info(unit)
  return (si - u.offset) / u.factor
}

/** A difference (spread, uncertainty, delta, noise band) to SI: the factor alone. */
export function diffToSI(d: number, unit: UnitLike): number {
  return d * info(unit).factor
}

export function diffFromSI(dSI: number, unit: UnitLike): number {
  return dSI / info(unit).factor
}

function withArticle(label: string): string {
  return /^[aeiou]/i.test(label) ? `an ${label}` : `a ${label}`
}

/** Both units parsed; throws UnitError 'dimension' when they measure different quantities. */
export function assertSameQuantity(entered: string, target: string): { entered: UnitInfo, target: UnitInfo } {
  const e = parseUnit(entered)
  const t = parseUnit(target)
  if (e.quantity !== t.quantity) {
    throw new UnitError(
      'dimension',
      `"${entered.trim()}" is ${withArticle(QUANTITY_LABELS[e.quantity])} unit; this target is measured in ${QUANTITY_LABELS[t.quantity]}`,
    )
  }
  return { entered: e, target: t }
}

/** The spelling mathjs parses for an accepted unit, e.g. 'N·m' → 'N m', 'min' → 'minute'. */
export function unitForMath(unit: string): string {
  return MATH_SPELLING.get(parseUnit(unit).unit)!
}
