// Design math beside the measurement: typed design parameters of revisions (inherited from the
// parent), a model per target over those parameters, the prediction with its uncertainty, the
// ratio of measured to predicted, a calibration factor over revisions, the sensitivity of the
// prediction to each parameter, the value of one parameter that meets the threshold, and the
// number of samples that tells Met from Short. Pure: no I/O.
//
// Parameters are stored as entered (value, unit, tolerance in that unit) and converted to SI
// when a model is evaluated. Models are formulas of shared/utils/derived.ts over parameter keys
// and plain numbers; angles count as dimensionless (rad = 1), so rpm × mm is a speed.
// A parameter's tolerance ±a is a rectangular distribution: u = a/√3 (GUM JCGM 100:2008, 4.3.7).

import { evaluateDerived, FormulaError, parseFormula, type DerivedInput, type FormulaWording } from './derived'
import { MAX_SAMPLES, tQuantile, welchSatterthwaite } from './readingStats'
import { diffFromSI, diffToSI, fromSI, parseUnit, toSI, UnitError } from './units'

export interface DesignParameter {
  key: string
  name: string
  /** a number, or a short text (a part number, a material) that models can't use */
  value: number | string
  /** as entered, in its canonical spelling when Ratchet reads it; null: dimensionless */
  unit: string | null
  /** ± half-width in `unit`, a rectangular distribution; null: exact */
  tolerance: number | null
}

export interface EffectiveParameter extends DesignParameter {
  /** set on an ancestor, not on this revision */
  inherited: boolean
}

// ---------------------------------------------------------------------------------------
// Keys

export const PARAMETER_KEY = /^[a-z][a-z0-9_]{0,59}$/
/** Words a model reads as something else (constants, functions, operators of the parser). */
export const RESERVED_PARAMETER_KEYS = [
  'pi', 'e', 'i', 'tau', 'phi', 'true', 'false', 'null', 'undefined', 'to', 'in', 'mod', 'and', 'or', 'not', 'xor',
  'sqrt', 'abs', 'sin', 'cos', 'tan', 'exp', 'log', 'log10',
]

/** A key made from a parameter's name: "Wheel radius (front)" → "wheel_radius_front". */
export function parameterKeyOf(name: string): string {
  let key = String(name).normalize('NFKD').replace(/[\u0300-\u036F]/g, '').toLowerCase()
    .replace(/[^a-z0-9]+/g, '_').replace(/^_+|_+$/g, '')
  if (key === '') key = 'parameter'
  if (/^[0-9]/.test(key)) key = `p_${key}`
  key = key.slice(0, 54).replace(/_+$/, '')
  if (RESERVED_PARAMETER_KEYS.includes(key)) key = `${key}_param`
  return key
}

/** Makes `key` unique among `taken` by adding _2, _3 … */
export function uniqueParameterKey(key: string, taken: ReadonlySet<string>): string {
  if (!taken.has(key)) return key
  for (let i = 2; ; i++) {
    const next = `${key}_${i}`
    if (!taken.has(next)) return next
  }
}

/**
 * A revision's effective parameters from its own and its ancestors', `chain` ordered from the
 * oldest ancestor to the revision itself: a revision inherits every parameter of its parent that
 * it doesn't set itself. Inherited parameters keep their ancestor's order; new ones follow.
 */
export function effectiveParameters(chain: readonly (readonly DesignParameter[])[]): EffectiveParameter[] {
  const out = new Map<string, EffectiveParameter>()
  chain.forEach((own, i) => {
    const self = i === chain.length - 1
    for (const p of own) out.set(p.key, { ...p, inherited: !self })
  })
  return [...out.values()]
}

// ---------------------------------------------------------------------------------------
// Models

export const MODEL_WORDING: FormulaWording = {
  formula: 'model',
  unknownOne: 'no revision of this build defines as a parameter',
  unknownMany: 'no revision of this build defines as parameters',
  input: key => `Parameter "${key}"`,
}

/** A FormulaError worded for a model (the parser speaks of formulas and target keys). */
function reworded(e: unknown): unknown {
  if (!(e instanceof FormulaError) || e.code !== 'syntax') return e
  return new FormulaError('syntax', e.message.replace(/^The formula/, 'The model').replace('target keys', 'parameter keys'), e.keys)
}

export class DesignError extends Error {
  readonly code: 'unusable' | 'no-solution' | 'no-prediction'
  constructor(code: DesignError['code'], message: string) {
    super(message)
    this.name = 'DesignError'
    this.code = code
  }
}

/** The keys a model uses, in order of first use (FormulaError 'syntax' when it can't be read). */
export function modelKeys(model: string): string[] {
  try {
    return parseFormula(model).symbols
  }
  catch (e) {
    throw reworded(e)
  }
}

/** Why a parameter can't enter a model, or null when it can. */
export function unusableReason(p: DesignParameter): string | null {
  if (typeof p.value !== 'number') return `Parameter "${p.key}" is a text ("${p.value}"), not a number`
  if (p.unit !== null) {
    try {
      parseUnit(p.unit)
    }
    catch (e) {
      if (e instanceof UnitError) return `Parameter "${p.key}" has a unit Ratchet doesn't read ("${p.unit}")`
      throw e
    }
  }
  return null
}

/**
 * Checks a model against the build's parameters (each key's unit as the build defines it) and
 * the target's display unit: FormulaError 'syntax', 'unknown-key' or 'dimension' (naming both
 * quantities), or DesignError 'unusable' for a key that is text or has an unreadable unit.
 */
export function checkModel(model: string, parameters: Readonly<Record<string, DesignParameter>>, targetUnit: string): { keys: string[] } {
  const keys = modelKeys(model)
  if (keys.length === 0) throw new FormulaError('syntax', 'The model uses no parameter key; write it over the revisions’ design parameters, e.g. motor_speed * wheel_radius')
  const units: Record<string, { unit: string }> = {}
  for (const key of keys) {
    const p = parameters[key]
    if (!p) continue
    const why = unusableReason(p)
    if (why) throw new DesignError('unusable', `The model can't use "${key}": ${why}`)
    units[key] = { unit: p.unit ?? '' }
  }
  try {
    evaluateDims(model, units, targetUnit)
  }
  catch (e) {
    throw reworded(e)
  }
  return { keys }
}

function evaluateDims(model: string, units: Record<string, { unit: string }>, targetUnit: string) {
  // evaluateDerived checks keys and dimension first; the values don't matter for that
  const inputs: Record<string, DerivedInput> = {}
  for (const [k, { unit }] of Object.entries(units)) inputs[k] = { mean: 1, u: null, unit }
  try {
    evaluateDerived(model, inputs, targetUnit, MODEL_WORDING)
  }
  catch (e) {
    if (e instanceof FormulaError && e.code === 'evaluate') return
    throw e
  }
}

export interface Prediction {
  /** in the target's display unit */
  value: number
  /** standard uncertainty from the tolerances, in the target's display unit (0 when all are exact) */
  u: number
  /** each key the model uses: its value in SI, its u in SI, ∂f/∂p in SI */
  inputs: Record<string, { si: number, uSI: number, partial: number }>
  /** the prediction in SI (for the elasticities) */
  si: number
  uSI: number
}

/**
 * The model's prediction on a revision's effective parameters, in the target's display unit,
 * with u propagated to first order from the tolerances (GUM 5.1.2 eq. 10, uncorrelated):
 * u² = Σ (∂f/∂pᵢ)² u²(pᵢ), u(pᵢ) = aᵢ/√3. Throws DesignError 'no-prediction' with the reason.
 */
export function predict(model: string, parameters: readonly DesignParameter[], targetUnit: string, override?: Record<string, number>): Prediction {
  const keys = modelKeys(model)
  const byKey = new Map(parameters.map(p => [p.key, p]))
  const inputs: Record<string, DerivedInput> = {}
  for (const key of keys) {
    const p = byKey.get(key)
    if (!p) throw new DesignError('no-prediction', `The revision has no parameter "${key}"`)
    const why = unusableReason(p)
    if (why) throw new DesignError('no-prediction', why)
    const unit = p.unit ?? ''
    const value = override && Object.hasOwn(override, key) ? override[key]! : p.value as number
    const mean = unit ? toSI(value, unit) : value
    const a = p.tolerance ?? 0
    inputs[key] = { mean, u: (unit ? diffToSI(a, unit) : a) / Math.sqrt(3), unit }
  }
  let result
  try {
    result = evaluateDerived(model, inputs, targetUnit, MODEL_WORDING)
  }
  catch (e) {
    if (e instanceof FormulaError) throw new DesignError('no-prediction', (reworded(e) as Error).message.replace(/^Can't evaluate the formula/, 'Can’t evaluate the model'))
    throw e
  }
  const uSI = result.u ?? 0
  const value = fromSI(result.mean, targetUnit)
  const u = diffFromSI(uSI, targetUnit)
  if (!Number.isFinite(value) || !Number.isFinite(u)) throw new DesignError('no-prediction', 'The prediction is too large to compute with')
  const out: Prediction['inputs'] = {}
  for (const key of keys) out[key] = { si: inputs[key]!.mean, uSI: inputs[key]!.u ?? 0, partial: result.partials[key]! }
  return { value, u, inputs: out, si: result.mean, uSI }
}

// ---------------------------------------------------------------------------------------
// Measured against predicted

export interface ValueU { value: number, u: number | null }

/**
 * ratio = measured mean / predicted value, u(ratio) = |ratio|·√((u_m/m)² + (u_p/p)²) (GUM 5.1.6,
 * relative uncertainties of a quotient add in quadrature). Null when the prediction is 0; u null
 * when the measured mean has no uncertainty (one sample, no resolution).
 */
export function ratioOf(measured: { mean: number, u: number | null }, predicted: { value: number, u: number }): ValueU | null {
  if (predicted.value === 0 || !Number.isFinite(predicted.value)) return null
  const value = measured.mean / predicted.value
  if (!Number.isFinite(value)) return null
  if (measured.u === null) return { value, u: null }
  const rm = measured.mean === 0 ? null : measured.u / measured.mean
  if (rm === null) return { value, u: null }
  const u = Math.abs(value) * Math.hypot(rm, predicted.u / predicted.value)
  return { value, u: Number.isFinite(u) ? u : null }
}

export interface Calibration {
  factor: number
  u: number | null
  /** 'weighted': inverse-variance weighted mean; 'plain': arithmetic mean (a u was 0 or missing) */
  method: 'weighted' | 'plain'
}

/**
 * The calibration factor over revisions: the inverse-variance weighted mean of the ratios,
 * F = Σ(rᵢ/uᵢ²)/Σ(1/uᵢ²), u(F) = (Σ 1/uᵢ²)^−½ (GUM eq. 10 on F = Σwᵢrᵢ/Σwᵢ, wᵢ = 1/uᵢ², gives
 * u²(F) = Σ(wᵢ/Σw)²uᵢ² = 1/Σw for independent ratios). When a ratio's u is 0 or unknown the weights are
 * undefined and the plain mean is used, with u = √(Σuᵢ²)/N (GUM eq. 10 on the mean; an unknown u
 * counts as 0) — null when no ratio has a u. Null for no ratios.
 */
export function calibrate(ratios: readonly ValueU[]): Calibration | null {
  if (ratios.length === 0) return null
  if (ratios.every(r => r.u !== null && r.u > 0)) {
    let sw = 0
    let swr = 0
    for (const r of ratios) {
      const w = 1 / (r.u! * r.u!)
      sw += w
      swr += w * r.value
    }
    return { factor: swr / sw, u: 1 / Math.sqrt(sw), method: 'weighted' }
  }
  const n = ratios.length
  const factor = ratios.reduce((s, r) => s + r.value, 0) / n
  const anyU = ratios.some(r => r.u !== null)
  return { factor, u: anyU ? Math.hypot(...ratios.map(r => r.u ?? 0)) / n : null, method: 'plain' }
}

/**
 * Effective degrees of freedom of the calibration factor (Welch–Satterthwaite, GUM G.4.1): each
 * ratio's u has a measured part with the cell's ν and a predicted part (rectangular tolerances,
 * ν = ∞, GUM G.4.3); the factor's components are those parts weighted as in `calibrate`.
 */
export function calibrationNu(parts: readonly { ratio: number, measuredRel: number, measuredNu: number | null, predictedRel: number, u: number | null }[], cal: Calibration): number {
  if (cal.u === null || cal.u === 0) return Infinity
  const components: { u: number, nu: number }[] = []
  const weights = parts.map(p => (cal.method === 'weighted' ? 1 / (p.u! * p.u!) : 1))
  const sw = weights.reduce((s, w) => s + w, 0)
  parts.forEach((p, i) => {
    const c = weights[i]! / sw
    components.push({ u: Math.abs(c * p.ratio * p.measuredRel), nu: p.measuredNu && p.measuredNu > 0 ? p.measuredNu : Infinity })
    components.push({ u: Math.abs(c * p.ratio * p.predictedRel), nu: Infinity })
  })
  return welchSatterthwaite(components)
}

export interface Sensitivity {
  parameter: string
  /** ∂ln f/∂ln p = (∂f/∂p)·p/f */
  elasticity: number | null
  /** (cᵢuᵢ)²/u_c²: this parameter's share of the predicted variance (0 when u_c = 0) */
  share: number
}

/** Each parameter's elasticity and share of the predicted u² (GUM 5.1.3: cᵢ = ∂f/∂xᵢ). */
export function sensitivityOf(prediction: Prediction): Sensitivity[] {
  const total = prediction.uSI ** 2
  return Object.entries(prediction.inputs).map(([parameter, x]) => ({
    parameter,
    elasticity: prediction.si === 0 ? null : x.partial * x.si / prediction.si,
    share: total > 0 ? (x.partial * x.uSI) ** 2 / total : 0,
  }))
}

// ---------------------------------------------------------------------------------------
// The calibrated prediction (the solver's and the what-if's)

export interface CalibratedPrediction {
  /** the model alone */
  model: Prediction
  /** F·f, in the target's display unit */
  value: number
  /** u² = (f·u_F)² + (F·u_f)² */
  u: number
  /** effective degrees of freedom: Welch–Satterthwaite over the factor's ν and the tolerances' ∞ */
  nu: number
  /** t(0.975, ν) */
  k: number
  /** value ± k·u; null when u = 0 (the value alone then decides the status) */
  ci95: [number, number] | null
}

/**
 * The calibrated prediction F·f on a revision's parameters (with `override` values in the
 * parameters' own units): u² = (f·u_F)² + (F·u_f)² (GUM 5.1.2 eq. 10 on the product F·f),
 * k = t(0.975, ν) with ν by Welch–Satterthwaite (GUM G.4.1) over the factor's ν and the
 * tolerances' ∞ (GUM G.4.3). `factor` is {value: 1, u: 0} without a calibration.
 */
export function calibratedPrediction(
  model: string,
  parameters: readonly DesignParameter[],
  targetUnit: string,
  factor: { value: number, u: number, nu: number },
  override?: Record<string, number>,
): CalibratedPrediction {
  const pr = predict(model, parameters, targetUnit, override)
  const value = factor.value * pr.value
  const uF = pr.value * factor.u
  const uf = factor.value * pr.u
  const u = Math.hypot(uF, uf)
  const nu = u > 0 ? welchSatterthwaite([{ u: Math.abs(uF), nu: factor.nu }, { u: Math.abs(uf), nu: Infinity }]) : Infinity
  const k = tQuantile(0.975, nu)
  return { model: pr, value, u, nu, k, ci95: u > 0 ? [value - k * u, value + k * u] : null }
}

// ---------------------------------------------------------------------------------------
// Solving for a parameter

/**
 * A root of g in [lo, hi] where g(lo) and g(hi) differ in sign, by bisection (each step halves
 * the bracket; 200 steps reach the spacing of doubles). Returns the end point with the smaller |g|.
 */
export function bisect(g: (x: number) => number, lo: number, hi: number): number {
  let a = lo
  let b = hi
  let ga = g(a)
  const gb = g(b)
  if (ga === 0) return a
  if (gb === 0) return b
  if (Math.sign(ga) === Math.sign(gb)) throw new RangeError('bisect: g(lo) and g(hi) have the same sign')
  for (let i = 0; i < 200; i++) {
    const m = a + (b - a) / 2
    if (m === a || m === b) break
    const gm = g(m)
    if (gm === 0) return m
    if (Number.isNaN(gm)) throw new RangeError('bisect: g is not defined inside the bracket')
    if (Math.sign(gm) === Math.sign(ga)) {
      a = m
      ga = gm
    }
    else {
      b = m
    }
  }
  return Math.abs(g(a)) <= Math.abs(g(b)) ? a : b
}

/** Points scanned for a sign change between 1/1000× and 1000× the current value. */
const SCAN_POINTS = 600

/**
 * The root of g between x0/1000 and x0·1000 nearest to x0 (on a log scale): the range is scanned
 * for sign changes, then the nearest bracket is bisected. Null when g keeps one sign there.
 */
export function rootNear(g: (x: number) => number, x0: number): { root: number | null, lowest: number, highest: number } {
  const sign = Math.sign(x0)
  const xs: number[] = []
  for (let i = 0; i <= SCAN_POINTS; i++) xs.push(sign * Math.abs(x0) * 10 ** (-3 + (6 * i) / SCAN_POINTS))
  const gs = xs.map(g)
  let best: number | null = null
  let bestDistance = Infinity
  let lowest = Infinity
  let highest = -Infinity
  for (let i = 0; i < xs.length; i++) {
    if (Number.isFinite(gs[i]!)) {
      lowest = Math.min(lowest, gs[i]!)
      highest = Math.max(highest, gs[i]!)
    }
    if (gs[i] === 0) {
      const d = Math.abs(Math.log(xs[i]! / x0))
      if (d < bestDistance) [best, bestDistance] = [xs[i]!, d]
      continue
    }
    if (i === 0) continue
    const [ga, gb] = [gs[i - 1]!, gs[i]!]
    if (!Number.isFinite(ga) || !Number.isFinite(gb) || ga === 0 || Math.sign(ga) === Math.sign(gb)) continue
    let root: number
    try {
      root = bisect(g, xs[i - 1]!, xs[i]!)
    }
    catch {
      continue
    }
    const d = Math.abs(Math.log(root / x0))
    if (d < bestDistance) [best, bestDistance] = [root, d]
  }
  return { root: best, lowest, highest }
}

export type Goal = { comparator: 'atLeast' | 'atMost' | 'between', threshold: number, thresholdHigh: number | null }

/** The value the calibrated prediction must meet: the threshold, or the band's middle for between. */
export function goalValue(goal: Goal): number {
  return goal.comparator === 'between' ? (goal.threshold + goal.thresholdHigh!) / 2 : goal.threshold
}

export interface SolveInput {
  model: string
  parameters: readonly DesignParameter[]
  /** the key to solve for */
  parameter: string
  targetUnit: string
  goal: Goal
  /** the calibration factor (1, u 0 without one) and its degrees of freedom */
  factor: { value: number, u: number, nu: number }
  margin: 'none' | '95'
}

export interface Solved {
  /** in the parameter's unit */
  value: number
  /** the calibrated prediction there, in the target's display unit */
  predicted: number
  /** its standard uncertainty */
  u: number
  /** the coverage factor used (margin 95), or null */
  k: number | null
}

/**
 * The value of one parameter at which the calibrated prediction F·f meets the goal. With margin
 * '95', where its lower 95 % bound F·f − k·u meets the threshold of an at-least target (the upper
 * bound F·f + k·u for at-most; a between target aims at the middle, and its 95 % interval there
 * must fit inside the band). u²
 * = (f·u_F)² + (F·u_f)², k = t(0.975, ν) with ν by Welch–Satterthwaite over the factor's ν and the
 * tolerances' ∞ (GUM G.4.1, G.4.3). Other parameters keep their values. DesignError otherwise.
 */
export function solveFor(input: SolveInput): Solved {
  const p = input.parameters.find(x => x.key === input.parameter)
  if (!p) throw new DesignError('unusable', `The revision has no parameter "${input.parameter}"`)
  const why = unusableReason(p)
  if (why) throw new DesignError('unusable', why)
  const keys = modelKeys(input.model)
  if (!keys.includes(p.key)) throw new DesignError('unusable', `The model doesn't use "${p.key}"; solve for one of ${keys.map(k => `"${k}"`).join(', ')}`)
  const x0 = p.value as number
  if (x0 === 0) throw new DesignError('no-solution', `"${p.key}" is 0 on this revision, so there is no range from 1/1000× to 1000× of it to search`)
  const target = goalValue(input.goal)
  const between = input.goal.comparator === 'between'
  const useMargin = input.margin === '95' && !between
  const side = input.goal.comparator === 'atMost' ? 1 : -1
  const at = (x: number) => {
    const c = calibratedPrediction(input.model, input.parameters, input.targetUnit, input.factor, { [p.key]: x })
    const k = input.margin === '95' ? c.k : null
    return { value: c.value, u: c.u, k, bound: k === null || !useMargin ? c.value : c.value + side * k * c.u }
  }
  const g = (x: number) => {
    try {
      return at(x).bound - target
    }
    catch (e) {
      if (e instanceof DesignError) return Number.NaN
      throw e
    }
  }
  const { root, lowest, highest } = rootNear(g, x0)
  const unit = p.unit ? ` ${p.unit}` : ''
  if (root === null) {
    const what = useMargin ? `the ${side < 0 ? 'lower' : 'upper'} 95 % bound of the calibrated prediction` : 'the calibrated prediction'
    const range = Number.isFinite(lowest) ? ` (it ranges from ${fmt(lowest + target)} to ${fmt(highest + target)} ${input.targetUnit} there)` : ''
    throw new DesignError(
      'no-solution',
      `No value of "${p.key}" between ${fmt(Math.min(x0 / 1000, x0 * 1000))} and ${fmt(Math.max(x0 / 1000, x0 * 1000))}${unit} makes ${what} reach ${fmt(target)} ${input.targetUnit}${range}`,
    )
  }
  const there = at(root)
  if (between && input.margin === '95') {
    // aimed at the middle: the 95 % interval there must fit inside the band
    const half = there.k! * there.u
    const room = (input.goal.thresholdHigh! - input.goal.threshold) / 2
    if (half > room) {
      throw new DesignError(
        'no-solution',
        `At "${p.key}" = ${fmt(root)}${unit} the calibrated prediction sits in the band’s middle, but its 95 % interval (±${fmt(half)} ${input.targetUnit}) is wider than the half-band (${fmt(room)} ${input.targetUnit})`,
      )
    }
  }
  return { value: root, predicted: there.value, u: there.u, k: there.k }
}

const fmt = (x: number) => String(Number(x.toPrecision(6)))

// ---------------------------------------------------------------------------------------
// How many samples decide it

export interface PlanInput {
  mean: number
  /** sample standard deviation; null with one sample */
  sd: number | null
  /** Type B standard uncertainty from the resolution (δ/√12); null without one */
  uB: number | null
  goal: Goal
}

export interface Plan {
  samplesNeeded: number | null
  reason: string
}

/** The threshold the mean is judged against: the nearer edge of a between band. */
export function nearestEdge(mean: number, goal: Goal): number {
  if (goal.comparator !== 'between') return goal.threshold
  return Math.abs(mean - goal.threshold) <= Math.abs(mean - goal.thresholdHigh!) ? goal.threshold : goal.thresholdHigh!
}

/** k(n)·u(n) with u² = sd²/n + u_B², k = t(0.975, ν_eff(n)), ν by Welch–Satterthwaite (GUM G.4.1). */
export function intervalHalfWidth(sd: number, uB: number, n: number): number {
  const uA = sd / Math.sqrt(n)
  const u = Math.hypot(uA, uB)
  const nu = uB > 0 ? welchSatterthwaite([{ u: uA, nu: n - 1 }, { u: uB, nu: Infinity }]) : n - 1
  return tQuantile(0.975, nu) * u
}

/**
 * The smallest n ≥ 2 for which the 95 % interval of the mean, t(0.975, ν(n))·√(sd²/n + u_B²),
 * is narrower than |mean − threshold|, so the reading tells Met from Short (the interval
 * shrinks as n grows, so the search bisects on n). Null with the reason when there is no
 * scatter yet, when the resolution alone keeps the interval wider than the distance, or past
 * MAX_SAMPLES.
 */
export function samplesNeeded(input: PlanInput): Plan {
  const edge = nearestEdge(input.mean, input.goal)
  const distance = Math.abs(input.mean - edge)
  const uB = input.uB ?? 0
  if (input.sd === null || !(input.sd > 0)) {
    return { samplesNeeded: null, reason: 'No scatter yet: take a reading of at least two values that differ, then the spread tells how many samples decide it' }
  }
  if (distance === 0) return { samplesNeeded: null, reason: 'The mean sits on the threshold: no number of samples tells Met from Short' }
  // as n → ∞ the interval shrinks to 1.96·u_B (ν → ∞)
  if (tQuantile(0.975, Infinity) * uB >= distance) {
    return { samplesNeeded: null, reason: `The instrument’s resolution alone (u_B = ${fmt(uB)}) keeps the 95 % interval wider than the distance to the threshold (${fmt(distance)}); use a finer instrument` }
  }
  const fits = (n: number) => intervalHalfWidth(input.sd!, uB, n) < distance
  if (!fits(MAX_SAMPLES)) {
    return { samplesNeeded: null, reason: `More than ${MAX_SAMPLES.toLocaleString('en-US')} samples: the mean is too close to the threshold for its scatter` }
  }
  let lo = 2
  let hi = MAX_SAMPLES
  if (fits(lo)) hi = lo
  while (hi - lo > 1) {
    const mid = Math.floor((lo + hi) / 2)
    if (fits(mid)) hi = mid
    else lo = mid
  }
  return { samplesNeeded: hi, reason: `With ${hi} samples the 95 % interval (±${fmt(intervalHalfWidth(input.sd, uB, hi))}) is narrower than the distance to the threshold (${fmt(distance)})` }
}
