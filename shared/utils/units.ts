// Units of measure. A unit is any expression mathjs's unit parser reads over its units and SI
// prefixes (km/s, N/mm, Wh/kg, kΩ, µF, L/min, m³/h …) plus Ratchet's additions below. Only
// that parser ever sees the text: it builds a product of units and powers and runs no code.
// Conversion factors come from the unit definitions, never from typed-in factors.
//
// A unit's quantity is named where the trade has a name (torque, stiffness, resistance …) and
// is otherwise its dimension in SI base units ("dim:kg·m/s³"). Torque and energy share a
// dimension but stay apart: a force times a length is a torque, anything else of that
// dimension (J, Wh, kg·m²/s²) an energy. Angles are a dimension of their own here, so rpm
// (an angular speed) and Hz (a frequency) stay apart too.

import { all, create } from 'mathjs'

/** A named quantity's key (e.g. 'torque'), or 'dim:' and its SI base units for an unnamed one. */
export type Quantity = string

/** The mathjs instance every unit goes through; a formula module evaluates with it too. */
export const math = create(all!, {})

math.createUnit({
  // Standard gravity, an exact conventional value (CGPM 1901; NIST SP 811 B.8).
  gn: '9.80665 m/s^2',
  // Ounce-force: the weight of one avoirdupois ounce under standard gravity.
  ozf: '1 oz gn',
  // One revolution per minute; mathjs's `cycle` is one turn, 2π rad.
  rpm: '1 cycle/min',
  rev: '1 cycle',
  mph: '1 mi/h',
  percent: { definition: '0.01' },
  ppm: { definition: '1e-6' },
  // The unit one, for counts; dimensionless, so it evaluates to a plain number.
  one: { definition: '1', aliases: ['count'] },
})
math.createUnit({
  // Mechanical horsepower is defined as 550 ft·lbf/s, psi as lbf/in² and the kip as 1000 lbf;
  // the electronvolt is exact since the 2019 SI (e = 1.602176634e-19 C). mathjs carries rounded
  // or older values for these, so they are redefined from the definitions.
  hp: '550 ft lbf/s',
  psi: '1 lbf/in^2',
  kip: '1000 lbf',
  eV: { definition: '1.602176634e-19 J', prefixes: 'short' },
}, { override: true })

// ---------------------------------------------------------------------------------------
// Dimensions: mathjs's base dimensions (mass, length, time, current, temperature, luminous
// intensity, amount of substance, angle, bit).

export type Dims = number[]
const BASE = math.Unit.BASE_DIMENSIONS as string[]
const ANGLE = BASE.indexOf('ANGLE')
const SYMBOL: Record<string, string> = {
  MASS: 'kg', LENGTH: 'm', TIME: 's', CURRENT: 'A', TEMPERATURE: 'K',
  LUMINOUS_INTENSITY: 'cd', AMOUNT_OF_SUBSTANCE: 'mol', ANGLE: 'rad', BIT: 'bit',
}

export const sameDims = (a: readonly number[], b: readonly number[]) => a.every((x, i) => Math.abs(x - b[i]!) < 1e-9)

function superscript(n: number): string {
  if (n === 1) return ''
  if (!Number.isInteger(n)) return `^${Number(n.toPrecision(6))}`
  const digits = '⁰¹²³⁴⁵⁶⁷⁸⁹'
  return String(n).replace(/\d/g, d => digits[Number(d)]!).replace('-', '⁻')
}

/** A dimension in SI base units, e.g. "kg·m/s³", "1/s", "1" for none. */
export function baseUnitsOf(dims: readonly number[], withAngle = true): string {
  const part = (sign: 1 | -1) => BASE
    .map((b, i) => ({ sym: SYMBOL[b], exp: sign * dims[i]!, angle: i === ANGLE }))
    .filter(p => p.sym && p.exp > 0 && (withAngle || !p.angle))
    .map(p => `${p.sym}${superscript(p.exp)}`)
  const top = part(1)
  const bottom = part(-1)
  const num = top.join('·') || '1'
  if (bottom.length === 0) return num
  return bottom.length === 1 ? `${num}/${bottom[0]}` : `${num}/(${bottom.join('·')})`
}

// ---------------------------------------------------------------------------------------
// Named quantities: key, label, SI unit (display and mathjs spelling) and words a search
// should find it by.

interface QuantityDef {
  key: string
  label: string
  si: string
  math: string
  words?: string
}

const QUANTITY_DEFS: QuantityDef[] = [
  { key: 'velocity', label: 'velocity', si: 'm/s', math: 'm/s', words: 'speed' },
  { key: 'mass', label: 'mass', si: 'kg', math: 'kg', words: 'weight' },
  { key: 'force', label: 'force', si: 'N', math: 'N', words: 'thrust load weight' },
  { key: 'torque', label: 'torque', si: 'N·m', math: 'N m', words: 'moment' },
  { key: 'current', label: 'current', si: 'A', math: 'A', words: 'amps' },
  { key: 'voltage', label: 'voltage', si: 'V', math: 'V', words: 'potential volts' },
  { key: 'power', label: 'power', si: 'W', math: 'W', words: 'watts' },
  { key: 'energy', label: 'energy', si: 'J', math: 'J', words: 'work heat' },
  { key: 'charge', label: 'charge', si: 'C', math: 'C', words: 'capacity battery' },
  { key: 'angularSpeed', label: 'angular speed', si: 'rad/s', math: 'rad/s', words: 'rotation spin revolutions' },
  { key: 'length', label: 'length', si: 'm', math: 'm', words: 'distance size diameter' },
  { key: 'time', label: 'time', si: 's', math: 's', words: 'duration' },
  { key: 'angle', label: 'angle', si: 'rad', math: 'rad' },
  { key: 'frequency', label: 'frequency', si: 'Hz', math: 'Hz', words: 'rate sample' },
  { key: 'temperature', label: 'temperature', si: 'K', math: 'K', words: 'heat' },
  { key: 'pressure', label: 'pressure or stress', si: 'Pa', math: 'Pa', words: 'stress strength modulus' },
  { key: 'acceleration', label: 'acceleration', si: 'm/s²', math: 'm/s^2', words: 'g' },
  { key: 'dimensionless', label: 'dimensionless', si: 'count', math: 'one', words: 'ratio count percent efficiency' },
  { key: 'area', label: 'area', si: 'm²', math: 'm^2' },
  { key: 'volume', label: 'volume', si: 'm³', math: 'm^3', words: 'capacity litre' },
  { key: 'density', label: 'density', si: 'kg/m³', math: 'kg/m^3' },
  { key: 'flowRate', label: 'flow rate', si: 'm³/s', math: 'm^3/s', words: 'volume flow' },
  { key: 'massFlowRate', label: 'mass flow rate', si: 'kg/s', math: 'kg/s' },
  { key: 'stiffness', label: 'stiffness', si: 'N/m', math: 'N/m', words: 'spring rate constant' },
  { key: 'torsionalStiffness', label: 'torsional stiffness', si: 'N·m/rad', math: 'N m/rad', words: 'spring rate torsion' },
  { key: 'specificEnergy', label: 'specific energy', si: 'J/kg', math: 'J/kg', words: 'energy density battery' },
  { key: 'specificPower', label: 'specific power', si: 'W/kg', math: 'W/kg', words: 'power density' },
  { key: 'resistance', label: 'resistance', si: 'Ω', math: 'ohm', words: 'ohm impedance' },
  { key: 'conductance', label: 'conductance', si: 'S', math: 'S', words: 'siemens' },
  { key: 'capacitance', label: 'capacitance', si: 'F', math: 'F', words: 'farad' },
  { key: 'inductance', label: 'inductance', si: 'H', math: 'H', words: 'henry' },
  { key: 'magneticFluxDensity', label: 'magnetic flux density', si: 'T', math: 'T', words: 'tesla field' },
  { key: 'magneticFlux', label: 'magnetic flux', si: 'Wb', math: 'Wb', words: 'weber' },
  { key: 'thermalResistance', label: 'thermal resistance', si: 'K/W', math: 'K/W', words: 'heat sink' },
  { key: 'thermalConductivity', label: 'thermal conductivity', si: 'W/(m·K)', math: 'W/(m K)', words: 'heat' },
  { key: 'heatFlux', label: 'heat flux or irradiance', si: 'W/m²', math: 'W/m^2', words: 'power density' },
  { key: 'specificHeat', label: 'specific heat capacity', si: 'J/(kg·K)', math: 'J/(kg K)', words: 'heat' },
  { key: 'momentOfInertia', label: 'moment of inertia', si: 'kg·m²', math: 'kg m^2', words: 'rotational inertia flywheel' },
  { key: 'impulse', label: 'impulse or momentum', si: 'N·s', math: 'N s', words: 'momentum' },
  { key: 'angularAcceleration', label: 'angular acceleration', si: 'rad/s²', math: 'rad/s^2' },
  { key: 'linearDensity', label: 'linear density', si: 'kg/m', math: 'kg/m', words: 'mass per length' },
  { key: 'arealDensity', label: 'areal density', si: 'kg/m²', math: 'kg/m^2', words: 'mass per area' },
  { key: 'dynamicViscosity', label: 'dynamic viscosity', si: 'Pa·s', math: 'Pa s' },
  { key: 'kinematicViscosity', label: 'kinematic viscosity', si: 'm²/s', math: 'm^2/s' },
  { key: 'electricField', label: 'electric field strength', si: 'V/m', math: 'V/m' },
  { key: 'data', label: 'data size', si: 'bit', math: 'bit', words: 'bytes memory storage' },
  { key: 'dataRate', label: 'data rate', si: 'bit/s', math: 'bit/s', words: 'bandwidth baud' },
  { key: 'amount', label: 'amount of substance', si: 'mol', math: 'mol' },
  { key: 'luminousIntensity', label: 'luminous intensity', si: 'cd', math: 'cd' },
]

interface NamedQuantity extends QuantityDef { dims: Dims }

const NAMED = new Map<string, NamedQuantity>()
for (const q of QUANTITY_DEFS) {
  NAMED.set(q.key, Object.freeze({ ...q, dims: [...math.unit(1, q.math).dimensions] }))
}
// Two named quantities never share a dimension, except torque and energy (told apart by spelling).
for (const a of NAMED.values()) {
  for (const b of NAMED.values()) {
    if (a.key < b.key && sameDims(a.dims, b.dims) && !(a.key === 'energy' && b.key === 'torque')) {
      throw new Error(`units: ${a.key} and ${b.key} share a dimension`)
    }
  }
}

/** Labels of the named quantities. */
export const QUANTITY_LABELS: Readonly<Record<string, string>> = Object.fromEntries(QUANTITY_DEFS.map(q => [q.key, q.label]))

/** SI units of the named quantities. */
export const SI_UNIT: Readonly<Record<string, string>> = Object.fromEntries(QUANTITY_DEFS.map(q => [q.key, q.si]))

const DIM_PREFIX = 'dim:'

/** "torque", or for an unnamed quantity its dimension, e.g. "dimension kg·m/s³". */
export function quantityLabel(quantity: Quantity): string {
  if (quantity.startsWith(DIM_PREFIX)) return `dimension ${quantity.slice(DIM_PREFIX.length)}`
  return QUANTITY_LABELS[quantity] ?? quantity
}

/** The SI unit a quantity's values are stored in, e.g. 'N·m', or 'kg·m/s³' for an unnamed one. */
export function siUnitOf(quantity: Quantity): string {
  if (quantity.startsWith(DIM_PREFIX)) return quantity.slice(DIM_PREFIX.length)
  return SI_UNIT[quantity] ?? quantity
}

/** Search words of a named quantity (empty for an unnamed one). */
export function quantityWords(quantity: Quantity): string {
  return NAMED.get(quantity)?.words ?? ''
}

/**
 * Named quantities whose dimension is `dims` (torque and energy both for N·m = J). With
 * `ignoreAngle`, angles count as dimensionless, and a quantity with an angle in it (angular
 * speed, torsional stiffness) is named only when no quantity without one fits.
 */
export function quantitiesOfDims(dims: readonly number[], ignoreAngle = false): string[] {
  if (!ignoreAngle || ANGLE < 0) return [...NAMED.values()].filter(q => sameDims(q.dims, dims)).map(q => q.key)
  const strip = (d: readonly number[]) => d.map((x, i) => (i === ANGLE ? 0 : x))
  const want = strip(dims)
  const fits = [...NAMED.values()].filter(q => sameDims(strip(q.dims), want))
  const plain = fits.filter(q => q.dims[ANGLE] === 0)
  return (plain.length > 0 ? plain : fits).map(q => q.key)
}

// ---------------------------------------------------------------------------------------
// The unit record

export interface UnitInfo {
  /** Canonical display spelling, e.g. 'N·m', 'km/h', '°C', 'kΩ', 'm³/h'. */
  unit: string
  quantity: Quantity
  /** SI value of one unit taken as a difference (spreads, uncertainties, deltas). */
  factor: number
  /** SI = value·factor + offset; non-zero only for the affine temperature scales. */
  offset: number
  /** Name for a picker, e.g. 'newton metre'; the quantity's label for a typed expression. */
  label: string
  /** Dimension over mathjs's base dimensions. */
  dims: Dims
  /** Spelling mathjs parses, in a unit string and in an expression. */
  math: string
}

export class UnitError extends Error {
  readonly code: 'unknown' | 'dimension'

  constructor(code: 'unknown' | 'dimension', message: string) {
    super(message)
    this.name = 'UnitError'
    this.code = code
  }
}

interface UnitDef {
  unit: string
  label: string
  math: string
  /** Needed only where the dimension can't tell (torque and energy). */
  quantity?: Quantity
  /** Other accepted spellings; each is normalised the same way as user input. */
  aliases?: string[]
}

// Units offered in the picker, in its order, and spellings that need a table entry (aliases,
// units mathjs spells otherwise). Anything else mathjs reads is accepted as typed.
const DEFS: UnitDef[] = [
  { unit: 'm/s', label: 'metre per second', math: 'm/s', aliases: ['m/sec', 'm s^-1'] },
  { unit: 'km/h', label: 'kilometre per hour', math: 'km/h', aliases: ['kph', 'kmh', 'kmph', 'km/hr'] },
  { unit: 'mph', label: 'mile per hour', math: 'mph', aliases: ['mi/h', 'mi/hr'] },
  { unit: 'ft/s', label: 'foot per second', math: 'ft/s', aliases: ['ft/sec'] },
  { unit: 'km/s', label: 'kilometre per second', math: 'km/s' },
  { unit: 'mm/s', label: 'millimetre per second', math: 'mm/s' },

  { unit: 'kg', label: 'kilogram', math: 'kg' },
  { unit: 'g', label: 'gram', math: 'g' },
  { unit: 'mg', label: 'milligram', math: 'mg' },
  { unit: 'lb', label: 'pound', math: 'lb', aliases: ['lbs', 'lbm'] },
  { unit: 'oz', label: 'ounce', math: 'oz' },

  { unit: 'N', label: 'newton', math: 'N' },
  { unit: 'mN', label: 'millinewton', math: 'mN' },
  { unit: 'kN', label: 'kilonewton', math: 'kN' },
  { unit: 'kgf', label: 'kilogram-force', math: 'kgf' },
  { unit: 'lbf', label: 'pound-force', math: 'lbf' },
  { unit: 'ozf', label: 'ounce-force', math: 'ozf' },

  { unit: 'N·m', quantity: 'torque', label: 'newton metre', math: 'N m', aliases: ['Nm'] },
  { unit: 'mN·m', quantity: 'torque', label: 'millinewton metre', math: 'mN m', aliases: ['mNm'] },
  { unit: 'N·cm', quantity: 'torque', label: 'newton centimetre', math: 'N cm', aliases: ['Ncm'] },
  { unit: 'N·mm', quantity: 'torque', label: 'newton millimetre', math: 'N mm', aliases: ['Nmm'] },
  { unit: 'kN·m', quantity: 'torque', label: 'kilonewton metre', math: 'kN m', aliases: ['kNm'] },
  { unit: 'kgf·cm', quantity: 'torque', label: 'kilogram-force centimetre', math: 'kgf cm', aliases: ['kgfcm'] },
  { unit: 'lbf·ft', quantity: 'torque', label: 'pound-force foot', math: 'lbf ft', aliases: ['ft·lbf'] },
  { unit: 'lbf·in', quantity: 'torque', label: 'pound-force inch', math: 'lbf inch', aliases: ['in·lbf'] },
  { unit: 'ozf·in', quantity: 'torque', label: 'ounce-force inch', math: 'ozf inch', aliases: ['in·ozf'] },

  { unit: 'A', label: 'ampere', math: 'A' },
  { unit: 'mA', label: 'milliampere', math: 'mA' },
  { unit: 'µA', label: 'microampere', math: 'uA' },

  { unit: 'V', label: 'volt', math: 'V' },
  { unit: 'mV', label: 'millivolt', math: 'mV' },
  { unit: 'kV', label: 'kilovolt', math: 'kV' },

  { unit: 'W', label: 'watt', math: 'W' },
  { unit: 'mW', label: 'milliwatt', math: 'mW' },
  { unit: 'kW', label: 'kilowatt', math: 'kW' },
  { unit: 'hp', label: 'horsepower (mechanical)', math: 'hp' },

  { unit: 'J', quantity: 'energy', label: 'joule', math: 'J' },
  { unit: 'kJ', quantity: 'energy', label: 'kilojoule', math: 'kJ' },
  { unit: 'Wh', quantity: 'energy', label: 'watt hour', math: 'Wh', aliases: ['W·h'] },
  { unit: 'kWh', quantity: 'energy', label: 'kilowatt hour', math: 'kWh', aliases: ['kW·h'] },

  { unit: 'C', label: 'coulomb', math: 'C' },
  { unit: 'mAh', label: 'milliampere hour', math: 'mAh', aliases: ['mA·h'] },
  { unit: 'Ah', label: 'ampere hour', math: 'Ah', aliases: ['A·h'] },

  { unit: 'rpm', label: 'revolution per minute', math: 'rpm', aliases: ['RPM', 'r/min', 'rev/min'] },
  { unit: 'rad/s', label: 'radian per second', math: 'rad/s', aliases: ['rad/sec'] },
  { unit: 'deg/s', label: 'degree per second', math: 'deg/s', aliases: ['°/s', 'deg/sec'] },

  { unit: 'm', label: 'metre', math: 'm' },
  { unit: 'cm', label: 'centimetre', math: 'cm' },
  { unit: 'mm', label: 'millimetre', math: 'mm' },
  { unit: 'µm', label: 'micrometre', math: 'um', aliases: ['micron'] },
  { unit: 'km', label: 'kilometre', math: 'km' },
  { unit: 'in', label: 'inch', math: 'inch', aliases: ['inch'] },
  { unit: 'ft', label: 'foot', math: 'ft', aliases: ['foot', 'feet'] },

  { unit: 's', label: 'second', math: 's', aliases: ['sec'] },
  { unit: 'ms', label: 'millisecond', math: 'ms' },
  { unit: 'µs', label: 'microsecond', math: 'us' },
  { unit: 'min', label: 'minute', math: 'minute' },
  { unit: 'h', label: 'hour', math: 'hour', aliases: ['hr'] },

  { unit: 'deg', label: 'degree', math: 'deg', aliases: ['°', 'degree'] },
  { unit: 'rad', label: 'radian', math: 'rad' },

  { unit: 'Hz', label: 'hertz', math: 'Hz', aliases: ['hz'] },
  { unit: 'kHz', label: 'kilohertz', math: 'kHz' },
  { unit: 'MHz', label: 'megahertz', math: 'MHz' },

  { unit: '°C', label: 'degree Celsius', math: 'degC', aliases: ['degC'] },
  { unit: 'K', label: 'kelvin', math: 'K' },
  { unit: '°F', label: 'degree Fahrenheit', math: 'degF', aliases: ['degF'] },

  { unit: 'Pa', label: 'pascal', math: 'Pa' },
  { unit: 'kPa', label: 'kilopascal', math: 'kPa' },
  { unit: 'MPa', label: 'megapascal', math: 'MPa', aliases: ['N/mm^2'] },
  { unit: 'GPa', label: 'gigapascal', math: 'GPa' },
  { unit: 'bar', label: 'bar', math: 'bar' },
  { unit: 'psi', label: 'pound-force per square inch', math: 'psi' },

  { unit: 'm/s²', label: 'metre per second squared', math: 'm/s^2', aliases: ['m/s/s', 'm s^-2'] },
  { unit: 'gn', label: 'standard gravity', math: 'gn' },

  { unit: '%', label: 'percent', math: 'percent', aliases: ['percent'] },
  { unit: 'ppm', label: 'part per million', math: 'ppm' },
  { unit: 'count', label: 'count', math: 'one' },

  { unit: 'mm²', label: 'square millimetre', math: 'mm^2' },
  { unit: 'cm²', label: 'square centimetre', math: 'cm^2' },
  { unit: 'm²', label: 'square metre', math: 'm^2' },
  { unit: 'mm³', label: 'cubic millimetre', math: 'mm^3' },
  { unit: 'cm³', label: 'cubic centimetre', math: 'cm^3', aliases: ['cc'] },
  { unit: 'mL', label: 'millilitre', math: 'mL', aliases: ['ml'] },
  { unit: 'L', label: 'litre', math: 'L', aliases: ['l'] },
  { unit: 'm³', label: 'cubic metre', math: 'm^3' },

  { unit: 'g/cm³', label: 'gram per cubic centimetre', math: 'g/cm^3', aliases: ['g/cc'] },
  { unit: 'kg/m³', label: 'kilogram per cubic metre', math: 'kg/m^3' },

  { unit: 'L/min', label: 'litre per minute', math: 'L/minute', aliases: ['lpm'] },
  { unit: 'mL/min', label: 'millilitre per minute', math: 'mL/minute' },
  { unit: 'm³/h', label: 'cubic metre per hour', math: 'm^3/h' },
  { unit: 'm³/s', label: 'cubic metre per second', math: 'm^3/s' },
  { unit: 'g/s', label: 'gram per second', math: 'g/s' },
  { unit: 'kg/s', label: 'kilogram per second', math: 'kg/s' },

  { unit: 'N/mm', label: 'newton per millimetre', math: 'N/mm' },
  { unit: 'N/m', label: 'newton per metre', math: 'N/m' },
  { unit: 'lbf/in', label: 'pound-force per inch', math: 'lbf/in' },
  { unit: 'N·m/rad', quantity: 'torsionalStiffness', label: 'newton metre per radian', math: 'N m/rad' },
  { unit: 'N·m/deg', quantity: 'torsionalStiffness', label: 'newton metre per degree', math: 'N m/deg' },

  { unit: 'Wh/kg', label: 'watt hour per kilogram', math: 'Wh/kg' },
  { unit: 'J/g', label: 'joule per gram', math: 'J/g' },
  { unit: 'J/kg', label: 'joule per kilogram', math: 'J/kg' },
  { unit: 'W/kg', label: 'watt per kilogram', math: 'W/kg' },

  { unit: 'mΩ', label: 'milliohm', math: 'mohm' },
  { unit: 'Ω', label: 'ohm', math: 'ohm' },
  { unit: 'kΩ', label: 'kilohm', math: 'kohm' },
  { unit: 'MΩ', label: 'megohm', math: 'Mohm' },
  { unit: 'S', label: 'siemens', math: 'S' },
  { unit: 'pF', label: 'picofarad', math: 'pF' },
  { unit: 'nF', label: 'nanofarad', math: 'nF' },
  { unit: 'µF', label: 'microfarad', math: 'uF' },
  { unit: 'F', label: 'farad', math: 'F' },
  { unit: 'µH', label: 'microhenry', math: 'uH' },
  { unit: 'mH', label: 'millihenry', math: 'mH' },
  { unit: 'H', label: 'henry', math: 'H' },
  { unit: 'mT', label: 'millitesla', math: 'mT' },
  { unit: 'T', label: 'tesla', math: 'T' },
  { unit: 'Wb', label: 'weber', math: 'Wb' },
  { unit: 'V/m', label: 'volt per metre', math: 'V/m' },

  { unit: 'K/W', label: 'kelvin per watt', math: 'K/W', aliases: ['°C/W', 'degC/W'] },
  { unit: 'W/(m·K)', label: 'watt per metre kelvin', math: 'W/(m K)' },
  { unit: 'W/m²', label: 'watt per square metre', math: 'W/m^2' },
  { unit: 'J/(kg·K)', label: 'joule per kilogram kelvin', math: 'J/(kg K)' },

  { unit: 'kg·m²', label: 'kilogram square metre', math: 'kg m^2' },
  { unit: 'g·cm²', label: 'gram square centimetre', math: 'g cm^2' },
  { unit: 'N·s', label: 'newton second', math: 'N s', aliases: ['Ns'] },
  { unit: 'rad/s²', label: 'radian per second squared', math: 'rad/s^2' },
  { unit: 'g/m', label: 'gram per metre', math: 'g/m' },
  { unit: 'kg/m', label: 'kilogram per metre', math: 'kg/m' },
  { unit: 'g/m²', label: 'gram per square metre', math: 'g/m^2', aliases: ['gsm'] },
  { unit: 'kg/m²', label: 'kilogram per square metre', math: 'kg/m^2' },
  { unit: 'm²/s', label: 'square metre per second', math: 'm^2/s' },
  { unit: 'mm²/s', label: 'square millimetre per second', math: 'mm^2/s', aliases: ['cSt'] },
  { unit: 'Pa·s', label: 'pascal second', math: 'Pa s' },
  { unit: 'mPa·s', label: 'millipascal second', math: 'mPa s', aliases: ['cP'] },

  { unit: 'bit', label: 'bit', math: 'bit' },
  { unit: 'B', label: 'byte', math: 'B' },
  { unit: 'kB', label: 'kilobyte', math: 'kB' },
  { unit: 'MB', label: 'megabyte', math: 'MB' },
  { unit: 'bit/s', label: 'bit per second', math: 'bit/s', aliases: ['bps'] },
  { unit: 'kbit/s', label: 'kilobit per second', math: 'kb/s', aliases: ['kbps', 'kb/s'] },
  { unit: 'Mbit/s', label: 'megabit per second', math: 'Mb/s', aliases: ['Mbps', 'Mb/s'] },
  { unit: 'mol', label: 'mole', math: 'mol' },
  { unit: 'cd', label: 'candela', math: 'cd' },
]

// Spellings that mathjs would read, but that people type meaning something else (common
// practice, no source): a mass times a length for a torque, a pound for a pound-force, a
// degree times a coulomb for a temperature, mega- for milli-.
const REFUSED = new Map<string, string>([
  ['kg·cm', 'write kgf·cm for a torque'],
  ['kg·m', 'write kgf·m or N·m for a torque'],
  ['ft·lb', 'write lbf·ft for a torque'],
  ['lb·ft', 'write lbf·ft for a torque'],
  ['in·lb', 'write lbf·in for a torque'],
  ['lb·in', 'write lbf·in for a torque'],
  ['deg·C', 'write °C'],
  ['deg·F', 'write °F'],
  ['MA', 'write mA for milliamperes'],
  ['G', 'write gn for standard gravity'],
])

/**
 * Reduces a typed spelling to a lookup key: compatibility forms folded (², ℃, µ), the ohm and
 * micro signs and degree signs spelled as mathjs spells them (ohm, u, deg), spaces dropped
 * around `/` and `^`, an exponent digit written after a letter (`m/s2`) given its `^`, and every
 * product separator (`*`, `·`, `.`, `-`, space) made `·`. Letter case is kept: mA and MA, g and
 * G are different units.
 */
function normalize(text: string): string {
  return text
    .trim()
    .replace(/[º˚]/g, '°') // ordinal and ring signs typed for a degree sign, before NFKC folds them
    .normalize('NFKC')
    .replace(/Ω/g, 'ohm') // NFKC makes the ohm sign a capital omega
    .replace(/μ/g, 'u') // and the micro sign a mu
    .replace(/°\s*([CF])(?![A-Za-z])/g, 'deg$1')
    .replace(/°/g, 'deg')
    .replace(/%/g, 'percent')
    .replace(/\s*([/^()])\s*/g, '$1')
    .replace(/([A-Za-z])(\d)/g, '$1^$2')
    .replace(/\^\s*\+/g, '^')
    .replace(/\s*[·⋅•∙*×]\s*/g, '·')
    .replace(/(?<=[A-Za-z])[.-](?=[A-Za-z])/g, '·')
    .replace(/\s+/g, '·')
}

const TABLE: UnitInfo[] = []
const BY_KEY = new Map<string, UnitInfo>()
// typed expressions already read, bounded so odd input can't grow it without end
const SEEN = new Map<string, UnitInfo>()
const SEEN_MAX = 2000

/** The quantity of a parsed unit: named by its dimension, torque where a force meets a length. */
function quantityOfUnit(unit: InstanceType<typeof math.Unit>, dims: Dims): Quantity {
  const named = quantitiesOfDims(dims)
  if (named.length === 1) return named[0]!
  if (named.length > 1) {
    // torque or energy: a force unit and a length unit in the expression make it a torque
    const parts = unit.units.map(u => [...u.unit.base.dimensions] as Dims)
    const force = NAMED.get('force')!.dims
    const length = NAMED.get('length')!.dims
    const hasForce = parts.some(d => sameDims(d, force))
    const hasLength = parts.some(d => sameDims(d, length))
    return hasForce && hasLength ? 'torque' : 'energy'
  }
  return `${DIM_PREFIX}${baseUnitsOf(dims)}`
}

const DISPLAY_NAME: Record<string, string> = { b: 'bit', ohm: 'Ω', degC: '°C', degF: '°F', percent: '%', one: 'count', inch: 'in', minute: 'min', hour: 'h' }
const DISPLAY_PREFIX: Record<string, string> = { u: 'µ' }

type UnitPart = InstanceType<typeof math.Unit>['units'][number]
// at run time a part's prefix is a record with its name (the type declares it a string)
const prefixOf = (u: UnitPart) => (u.prefix as unknown as { name: string }).name

/** One canonical spelling of a parsed unit: `·` between factors, ² and ³, a single `/`. */
function displayOf(unit: InstanceType<typeof math.Unit>): string {
  const term = (u: UnitPart, power: number) => {
    const name = DISPLAY_NAME[u.unit.name] ?? u.unit.name
    const prefix = DISPLAY_PREFIX[prefixOf(u)] ?? prefixOf(u)
    const exp = power === 1 ? '' : power === 2 ? '²' : power === 3 ? '³' : `^${power}`
    return `${prefix}${name}${exp}`
  }
  const top = unit.units.filter(u => u.power > 0).map(u => term(u, u.power))
  const bottom = unit.units.filter(u => u.power < 0).map(u => term(u, -u.power))
  const num = top.join('·') || '1'
  if (bottom.length === 0) return num
  return bottom.length === 1 ? `${num}/${bottom[0]}` : `${num}/(${bottom.join('·')})`
}

function mathSpellingOf(unit: InstanceType<typeof math.Unit>): string {
  // `in` and `min` alone would be read as an operator and a function in an expression
  const names: Record<string, string> = { in: 'inch', min: 'minute' }
  const term = (u: UnitPart) => `${prefixOf(u)}${names[u.unit.name] ?? u.unit.name}${u.power === 1 ? '' : `^${u.power}`}`
  return unit.units.map(term).join(' ')
}

/** Reads a normalised key with mathjs's unit parser; a UnitError when it can't. */
function readExpression(key: string, typed: string): UnitInfo {
  const refused = REFUSED.get(key)
  if (refused) throw new UnitError('unknown', `Ambiguous unit "${typed}": ${refused}`)
  // letters, digits, and the signs of a product of powers; nothing else reaches the parser
  if (!/^[A-Za-z0-9·/^().-]+$/.test(key)) throw new UnitError('unknown', `Unknown unit "${typed}": a unit is letters with ·, /, ^ and parentheses`)
  // "1/s": mathjs would read the 1 as a value, so the reciprocal is taken of the rest
  const reciprocal = /^1\/./.test(key)
  const spelling = (reciprocal ? key.slice(2) : key).replace(/·/g, ' ')
  let parsed: InstanceType<typeof math.Unit>
  try {
    parsed = math.unit(spelling)
    if (reciprocal && parsed.value === null) parsed = math.pow(parsed, -1) as InstanceType<typeof math.Unit>
  }
  catch (e) {
    const why = e instanceof Error ? e.message.replace(/^Unit "(.+)" not found\.?$/, '"$1" is not a unit') : ''
    throw new UnitError('unknown', `Unknown unit "${typed}"${why ? `: ${why}` : ''}`)
  }
  if (parsed.value !== null) throw new UnitError('unknown', `Unknown unit "${typed}": a unit holds no number; give the number as the value`)
  if (parsed.units.length === 0) throw new UnitError('unknown', `Unknown unit "${typed}"`)
  for (const u of parsed.units) {
    if (!Number.isFinite(u.power) || Math.abs(u.power) > 9 || !Number.isInteger(u.power * 2) || u.power === 0) {
      throw new UnitError('unknown', `Unknown unit "${typed}": a power is a whole or half number between −9 and 9`)
    }
  }
  const dims = [...parsed.dimensions]
  const factor = math.unit(1, mathSpellingOf(parsed)).toSI().toNumber()
  if (!dims.every(Number.isFinite) || !Number.isFinite(factor) || factor <= 0) {
    throw new UnitError('unknown', `Unknown unit "${typed}": its size is out of range`)
  }
  const quantity = quantityOfUnit(parsed, dims)
  return Object.freeze({
    unit: displayOf(parsed),
    quantity,
    // a compound unit with °C or °F means a difference (°C/W is K/W): no offset
    factor,
    offset: 0,
    label: quantityLabel(quantity),
    dims,
    math: mathSpellingOf(parsed),
  })
}

for (const def of DEFS) {
  const one = math.unit(1, def.math)
  const zero = math.unit(0, def.math).toSI().toNumber()
  const dims = [...one.dimensions]
  const quantity = def.quantity ?? quantityOfUnit(math.unit(def.math), dims)
  const named = NAMED.get(quantity)
  if (!named || !sameDims(named.dims, dims)) throw new Error(`units: ${def.unit} does not measure a named quantity of its dimension`)
  // An affine scale (°C, °F) has a zero offset from SI; its factor is the size of one degree.
  const factor = zero === 0 ? one.toSI().toNumber() : Number(one.units[0]!.unit.value)
  const info: UnitInfo = Object.freeze({
    unit: def.unit, quantity, factor, offset: zero, label: def.label, dims, math: def.math,
  })
  TABLE.push(info)
  for (const spelling of [def.unit, ...(def.aliases ?? [])]) {
    const key = normalize(spelling)
    const taken = BY_KEY.get(key)
    if (taken && taken !== info) throw new Error(`units: "${spelling}" is claimed by ${taken.unit} and ${def.unit}`)
    BY_KEY.set(key, info)
  }
}
// every named quantity's SI unit is in the table
for (const q of NAMED.values()) {
  if (BY_KEY.get(normalize(q.si))?.quantity !== q.key) throw new Error(`units: the SI unit of ${q.key} is missing`)
}

/** The longest unit text read; anything longer is refused before parsing. */
export const MAX_UNIT_LENGTH = 30

export function parseUnit(text: string): UnitInfo {
  const typed = String(text ?? '').trim()
  if (typed.length > MAX_UNIT_LENGTH) throw new UnitError('unknown', `A unit has at most ${MAX_UNIT_LENGTH} characters`)
  const key = normalize(typed)
  if (key === '') throw new UnitError('unknown', 'A unit is required')
  const known = BY_KEY.get(key) ?? SEEN.get(key)
  if (known) return known
  const read = readExpression(key, typed)
  // the same unit under its canonical spelling, if the table has it (e.g. "kg m^2" is kg·m²)
  const canonical = BY_KEY.get(normalize(read.unit))
  const info = canonical && canonical.quantity === read.quantity ? canonical : read
  if (SEEN.size >= SEEN_MAX) SEEN.clear()
  SEEN.set(key, info)
  return info
}

/** Picker units, optionally of one quantity only. */
export function listUnits(quantity?: Quantity): UnitInfo[] {
  return quantity ? TABLE.filter(u => u.quantity === quantity) : [...TABLE]
}

/** Named quantities in picker order. */
export function listQuantities(): { key: string, label: string, si: string }[] {
  return QUANTITY_DEFS.map(q => ({ key: q.key, label: q.label, si: q.si }))
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

function describeQuantity(quantity: Quantity): string {
  return quantity.startsWith(DIM_PREFIX) ? `a unit of ${quantityLabel(quantity)}` : `${withArticle(quantityLabel(quantity))} unit`
}

/** Both units parsed; throws UnitError 'dimension' when they measure different quantities. */
export function assertSameQuantity(entered: string, target: string): { entered: UnitInfo, target: UnitInfo } {
  const e = parseUnit(entered)
  const t = parseUnit(target)
  if (e.quantity !== t.quantity) {
    throw new UnitError(
      'dimension',
      `"${entered.trim()}" is ${describeQuantity(e.quantity)}; this target is measured in ${quantityLabel(t.quantity)} (${t.unit})`,
    )
  }
  return { entered: e, target: t }
}

/** The spelling mathjs parses for a unit, e.g. 'N·m' → 'N m', 'min' → 'minute'. */
export function unitForMath(unit: string): string {
  return parseUnit(unit).math
}

/** "1 lbf/in = 0.175127 N/mm": one unit of `from` in `to` (same quantity), six significant digits. */
export function conversionText(from: string, to: string): string {
  const { entered, target } = assertSameQuantity(from, to)
  const value = entered.offset === 0 && target.offset === 0
    ? entered.factor / target.factor
    : fromSI(toSI(1, entered), target)
  const rounded = Number(value.toPrecision(6))
  const size = Math.abs(rounded)
  const text = size !== 0 && (size >= 1e6 || size < 1e-4) ? rounded.toExponential().replace('e+', 'e') : String(rounded)
  return `1 ${entered.unit} = ${text} ${target.unit}`
}
