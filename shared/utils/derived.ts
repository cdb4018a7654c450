// Derived targets: a formula over other targets' keys, checked for dimension against the
// target's unit and evaluated in SI, with its uncertainty propagated to first order
// (GUM JCGM 100:2008, 5.1.2 eq. 10, inputs taken as uncorrelated).
//
// Formulas carry no units of their own: every key stands for its target's value in SI, so a
// formula evaluated on SI values gives the result in the coherent SI unit of its dimension.
// Angles count as dimensionless, as in SI (rad = 1): torque × angular speed is a power.

import type { ConstantNode, FunctionNode, MathNode, OperatorNode, ParenthesisNode, SymbolNode } from 'mathjs'
import { baseUnitsOf, math, parseUnit, QUANTITY_LABELS, quantitiesOfDims, quantityLabel, sameDims, SI_UNIT, UnitError } from './units'

export type FormulaErrorCode = 'syntax' | 'unknown-key' | 'dimension' | 'cycle' | 'evaluate'

export class FormulaError extends Error {
  readonly code: FormulaErrorCode
  /** The keys the message is about: unknown keys, or the cycle's path. */
  readonly keys: string[]

  constructor(code: FormulaErrorCode, message: string, keys: string[] = []) {
    super(message)
    this.name = 'FormulaError'
    this.code = code
    this.keys = keys
  }
}

/** Functions a formula may call, each with one argument; all are differentiable by mathjs. */
const FUNCTIONS = ['sqrt', 'abs', 'sin', 'cos', 'tan', 'exp', 'log', 'log10'] as const
const CONSTANTS = ['pi'] as const
const OPERATORS = new Set(['add', 'subtract', 'multiply', 'divide', 'pow', 'unaryMinus', 'unaryPlus'])
/** Longest formula accepted, after folding pasted signs (² → ^2 …). */
export const FORMULA_MAX_LENGTH = 500

type FunctionName = typeof FUNCTIONS[number]
const isFunctionName = (name: string): name is FunctionName => (FUNCTIONS as readonly string[]).includes(name)
const isConstant = (name: string) => (CONSTANTS as readonly string[]).includes(name)

const ALLOWED = `numbers, target keys, + − * / ^, parentheses, ${CONSTANTS.join(', ')} and ${FUNCTIONS.map(f => `${f}()`).join(', ')}`

interface Parsed {
  node: MathNode
  symbols: string[]
}

/** Typed forms people paste from documents, folded to what the parser reads. */
function normalizeFormula(formula: string): string {
  return formula
    .replace(/[·×⋅∙]/g, '*')
    .replace(/[−–]/g, '-')
    .replace(/²/g, '^2')
    .replace(/³/g, '^3')
}

// Formulas read lately (only those that passed the grammar), by their folded text; bounded.
const PARSED_MAX = 500
const parsedFormulas = new Map<string, Parsed>()

function parse(formula: string): Parsed {
  const text = normalizeFormula(String(formula ?? '')).trim()
  if (text === '') throw new FormulaError('syntax', 'The formula is empty')
  if (text.length > FORMULA_MAX_LENGTH) throw new FormulaError('syntax', `The formula is longer than ${FORMULA_MAX_LENGTH} characters`)
  const seen = parsedFormulas.get(text)
  if (seen) return seen
  let node: MathNode
  try {
    node = math.parse(text)
  }
  catch (e) {
    throw new FormulaError('syntax', `The formula has a syntax error: ${(e as Error).message}`)
  }
  const symbols = new Set<string>()
  check(node, symbols)
  const parsed = { node, symbols: [...symbols] }
  if (parsedFormulas.size >= PARSED_MAX) parsedFormulas.clear()
  parsedFormulas.set(text, parsed)
  return parsed
}

/** Walks the tree and refuses anything outside the small grammar formulas are allowed. */
function check(node: MathNode, symbols: Set<string>): void {
  const refuse = (what: string): never => {
    throw new FormulaError('syntax', `The formula can't contain ${what}; it may use ${ALLOWED}`)
  }
  switch (node.type) {
    case 'ConstantNode': {
      const value = (node as ConstantNode).value
      if (typeof value !== 'number' || !Number.isFinite(value)) refuse(`the value ${JSON.stringify(value)}`)
      return
    }
    case 'SymbolNode': {
      const name = (node as SymbolNode).name
      if (isFunctionName(name)) refuse(`${name} without parentheses`)
      if (!isConstant(name)) symbols.add(name)
      return
    }
    case 'ParenthesisNode':
      return check((node as ParenthesisNode).content, symbols)
    case 'OperatorNode': {
      const op = node as OperatorNode
      if (!OPERATORS.has(op.fn)) refuse(`the operator "${op.op}"`)
      for (const arg of op.args) check(arg, symbols)
      return
    }
    case 'FunctionNode': {
      const fn = node as FunctionNode
      const name = fn.fn.type === 'SymbolNode' ? (fn.fn as SymbolNode).name : ''
      if (!isFunctionName(name)) refuse(`the function ${name || fn.fn.toString()}()`)
      if (fn.args.length !== 1) throw new FormulaError('syntax', `${name}() takes exactly one argument`)
      return check(fn.args[0]!, symbols)
    }
    case 'AssignmentNode':
    case 'FunctionAssignmentNode':
      return refuse('an assignment')
    default:
      return refuse(`"${node.toString()}"`)
  }
}

/** Parses a formula and lists the target keys it uses (in order of first use). */
export function parseFormula(formula: string): { symbols: string[] } {
  return { symbols: parse(formula).symbols }
}

// ---------------------------------------------------------------------------------------
// Dimensions. Each input stands for one SI unit of its quantity; the tree is evaluated on
// dimension vectors (mathjs base dimensions, angle dropped), so a mismatch inside the
// formula can be reported with the two sides that disagree.

type Dims = number[]
const NONE: Dims = math.Unit.BASE_DIMENSIONS.map(() => 0)
const ANGLE = (math.Unit.BASE_DIMENSIONS as string[]).indexOf('ANGLE')

/** The dimension of a unit with the angle dropped (a radian is a ratio of lengths). */
function dimsOfUnit(unit: string): Dims {
  const dims = [...parseUnit(unit).dims]
  if (ANGLE >= 0) dims[ANGLE] = 0
  return dims
}

const isNone = (a: Dims) => sameDims(a, NONE)

/** "power (W)", "torque (N·m) or energy (J)", or base units such as "kg·m/s³" when nothing matches. */
function describe(dims: Dims): string {
  // an angle is dimensionless here; quantities with one are named only when nothing else fits
  const names = quantitiesOfDims(dims, true)
  if (names.length > 0) return names.map(q => `${QUANTITY_LABELS[q]} (${SI_UNIT[q]})`).join(' or ')
  return baseUnitsOf(dims, false)
}

function dimsOf(node: MathNode, inputs: Record<string, Dims>): Dims {
  switch (node.type) {
    case 'ConstantNode':
      return NONE
    case 'SymbolNode': {
      const name = (node as SymbolNode).name
      return isConstant(name) ? NONE : inputs[name]!
    }
    case 'ParenthesisNode':
      return dimsOf((node as ParenthesisNode).content, inputs)
    case 'FunctionNode': {
      const fn = node as FunctionNode
      const name = (fn.fn as SymbolNode).name
      const arg = dimsOf(fn.args[0]!, inputs)
      if (name === 'sqrt') return arg.map(x => x / 2)
      if (name === 'abs') return arg
      if (!isNone(arg)) {
        throw new FormulaError('dimension', `${name}() needs a dimensionless argument, but ${fn.args[0]!.toString()} is ${describe(arg)}`)
      }
      return NONE
    }
    default: {
      const op = node as OperatorNode
      const [a, b] = op.args.map(arg => dimsOf(arg, inputs))
      switch (op.fn) {
        case 'unaryMinus':
        case 'unaryPlus':
          return a!
        case 'multiply':
          return a!.map((x, i) => x + b![i]!)
        case 'divide':
          return a!.map((x, i) => x - b![i]!)
        case 'add':
        case 'subtract':
          if (!sameDims(a!, b!)) {
            throw new FormulaError(
              'dimension',
              `The formula ${op.fn === 'add' ? 'adds' : 'subtracts'} ${describe(b!)} ${op.fn === 'add' ? 'to' : 'from'} ${describe(a!)} in ${op.toString()}`,
            )
          }
          return a!
        default: { // pow
          const [base, exponent] = op.args
          if (!isNone(b!)) throw new FormulaError('dimension', `The exponent in ${op.toString()} must be dimensionless`)
          if (isNone(a!)) return NONE
          if (symbolsOf(exponent!).length > 0) {
            throw new FormulaError('dimension', `${base!.toString()} has a unit, so its exponent in ${op.toString()} must be a plain number`)
          }
          const power = exponent!.compile().evaluate({}) as unknown
          if (typeof power !== 'number' || !Number.isFinite(power)) {
            throw new FormulaError('evaluate', `Can't evaluate the exponent in ${op.toString()}`)
          }
          return a!.map(x => x * power)
        }
      }
    }
  }
}

function symbolsOf(node: MathNode): string[] {
  const found = new Set<string>()
  check(node, found)
  return [...found]
}

/** The dimension of a display unit, as a FormulaError when the unit is not known; '' is dimensionless. */
function dimsOfTarget(unit: string, whose: string): Dims {
  if (unit === '') return NONE
  try {
    return dimsOfUnit(unit)
  }
  catch (e) {
    if (e instanceof UnitError) throw new FormulaError('dimension', `${whose}: ${e.message}`)
    throw e
  }
}

/** How messages name a formula and its inputs: derived targets' formulas over targets, or design models over parameters. */
export interface FormulaWording {
  /** "formula" or "model" */
  formula: string
  /** ends "The formula uses "x", which …" for one unknown key */
  unknownOne: string
  /** … for several */
  unknownMany: string
  /** names an input in a unit problem, e.g. 'Target "x"' */
  input: (key: string) => string
}

export const TARGET_WORDING: FormulaWording = {
  formula: 'formula',
  unknownOne: 'is not a target of this build',
  unknownMany: 'are not targets of this build',
  input: key => `Target "${key}"`,
}

function checkParsed(parsed: Parsed, inputs: Record<string, { unit: string }>, resultUnit: string, words: FormulaWording = TARGET_WORDING): void {
  const unknown = parsed.symbols.filter(s => !Object.hasOwn(inputs, s))
  if (unknown.length > 0) {
    const list = unknown.map(k => `"${k}"`).join(', ')
    throw new FormulaError(
      'unknown-key',
      unknown.length === 1
        ? `The ${words.formula} uses ${list}, which ${words.unknownOne}`
        : `The ${words.formula} uses ${list}, which ${words.unknownMany}`,
      unknown,
    )
  }
  const dims: Record<string, Dims> = {}
  for (const key of parsed.symbols) dims[key] = dimsOfTarget(inputs[key]!.unit, words.input(key))
  const target = dimsOfTarget(resultUnit, 'This target')
  const gives = dimsOf(parsed.node, dims)
  if (!sameDims(gives, target)) {
    const unit = parseUnit(resultUnit)
    throw new FormulaError(
      'dimension',
      `The ${words.formula} gives ${describe(gives)} but this target is measured in ${quantityLabel(unit.quantity)} (${unit.unit})`,
    )
  }
}

/**
 * Refuses a formula that uses keys missing from `inputs` or whose dimension differs from that
 * of `resultUnit`. `inputs` maps each available target key to its display unit.
 */
export function checkFormula(
  formula: string,
  inputs: Record<string, { unit: string }>,
  resultUnit: string,
  words: FormulaWording = TARGET_WORDING,
): { symbols: string[] } {
  const parsed = parse(formula)
  checkParsed(parsed, inputs, resultUnit, words)
  return { symbols: parsed.symbols }
}

/**
 * A cycle in the graph of target key → keys its formula uses, as a path that starts and ends
 * on the same key (e.g. ['power', 'torque', 'power']), or null. Keys that are not in the graph
 * are measured targets and end a path.
 */
export function findCycle(graph: Record<string, readonly string[]>): string[] | null {
  const state = new Map<string, 'open' | 'done'>()
  const path: string[] = []

  const visit = (key: string): string[] | null => {
    if (state.get(key) === 'done') return null
    if (state.get(key) === 'open') return [...path.slice(path.indexOf(key)), key]
    state.set(key, 'open')
    path.push(key)
    for (const next of Object.hasOwn(graph, key) ? graph[key]! : []) {
      const cycle = visit(next)
      if (cycle) return cycle
    }
    path.pop()
    state.set(key, 'done')
    return null
  }

  for (const key of Object.keys(graph).sort()) {
    const cycle = visit(key)
    if (cycle) return cycle
  }
  return null
}

/** Throws FormulaError 'cycle' naming the path when formulas refer to each other in a circle. */
export function assertNoCycle(graph: Record<string, readonly string[]>): void {
  const cycle = findCycle(graph)
  if (cycle) {
    throw new FormulaError(
      'cycle',
      cycle.length === 2
        ? `The formula of "${cycle[0]}" uses "${cycle[0]}" itself`
        : `The formulas refer to each other in a circle: ${cycle.join(' → ')}`,
      cycle,
    )
  }
}

export interface DerivedInput {
  /** The input target's value in SI. */
  mean: number
  /** Its standard uncertainty in SI, or null when it has none. */
  u: number | null
  /** Its display unit (for the dimension check); '' for a dimensionless number. */
  unit: string
}

export interface DerivedValue {
  /** In the SI unit of the result's quantity. */
  mean: number
  /** Combined standard uncertainty in SI; null only when no input has an uncertainty. */
  u: number | null
  /** ∂f/∂xᵢ at the inputs' means, in SI (sensitivity coefficients cᵢ of GUM 5.1.3). */
  partials: Record<string, number>
}

// Compiled trees and derivatives of the parsed formulas (held as long as the tree is): a solver
// evaluates one formula hundreds of times.
const compiled = new WeakMap<MathNode, ReturnType<MathNode['compile']>>()
const derivatives = new WeakMap<MathNode, Map<string, MathNode>>()

/** ∂node/∂key (exact, unsimplified), kept with the parsed tree it came from. */
function derivativeOf(node: MathNode, key: string): MathNode {
  let byKey = derivatives.get(node)
  if (!byKey) {
    byKey = new Map()
    derivatives.set(node, byKey)
  }
  let d = byKey.get(key)
  if (!d) {
    d = math.derivative(node, key, { simplify: false })
    byKey.set(key, d)
  }
  return d
}

function evaluateNumber(node: MathNode, scope: Record<string, number>): number {
  let value: unknown
  try {
    let code = compiled.get(node)
    if (!code) {
      code = node.compile()
      compiled.set(node, code)
    }
    value = code.evaluate({ ...scope })
  }
  catch {
    value = Number.NaN
  }
  // A division by zero gives ±Infinity, a square root or logarithm of a negative a Complex.
  return typeof value === 'number' && Number.isFinite(value) ? value : Number.NaN
}

/**
 * Evaluates a derived target from its inputs (all in SI) and propagates their standard
 * uncertainties: u_c² = Σ (∂f/∂xᵢ)² u²(xᵢ) (GUM eq. 10). The partial derivatives are exact
 * symbolic derivatives (mathjs `derivative`) evaluated at the means. Every key the formula
 * uses must be present in `inputs`; a revision missing one of them has no derived value.
 */
export function evaluateDerived(
  formula: string,
  inputs: Record<string, DerivedInput>,
  resultUnit: string,
  words: FormulaWording = TARGET_WORDING,
): DerivedValue {
  const parsed = parse(formula)
  checkParsed(parsed, inputs, resultUnit, words)

  const scope: Record<string, number> = {}
  for (const key of parsed.symbols) {
    const { mean, u } = inputs[key]!
    if (!Number.isFinite(mean)) throw new FormulaError('evaluate', `Can't evaluate the formula: "${key}" has no value`)
    if (u !== null && !(Number.isFinite(u) && u >= 0)) {
      throw new FormulaError('evaluate', `Can't evaluate the formula: the uncertainty of "${key}" is not a non-negative number`)
    }
    scope[key] = mean
  }

  const mean = evaluateNumber(parsed.node, scope)
  if (Number.isNaN(mean)) {
    throw new FormulaError(
      'evaluate',
      `Can't evaluate the formula with these values (a division by zero, or a result that is not a finite real number)`,
    )
  }

  const partials: Record<string, number> = {}
  // the terms cᵢuᵢ of u_c = √Σ(cᵢuᵢ)², combined by hypot so that no square overflows on the way
  const terms: number[] = []
  let anyU = false
  for (const key of parsed.symbols) {
    const u = inputs[key]!.u
    const c = evaluateNumber(derivativeOf(parsed.node, key), scope)
    partials[key] = c
    if (u === null) continue
    anyU = true
    if (u === 0) continue
    if (Number.isNaN(c)) {
      throw new FormulaError('evaluate', `Can't propagate the uncertainty: the formula's rate of change with "${key}" is not finite at these values`)
    }
    terms.push(c * u)
  }
  return { mean, u: anyU ? Math.hypot(...terms) : null, partials }
}
