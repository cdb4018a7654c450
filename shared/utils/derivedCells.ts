// The cells of derived targets: each derived target evaluated on every revision from its inputs'
// pooled cells (means and standard uncertainties in SI), with its 95 % interval, status and
// movement, so a derived row of the matrix reads like a measured one. Nothing is stored: the
// server evaluates these from the cells it has already loaded.
//
// Interval: the combined standard uncertainty u_c comes from GUM eq. 10 (derived.ts); its
// effective degrees of freedom from the Welch–Satterthwaite formula over the terms |cᵢ|·u(xᵢ)
// with each input's own ν_eff (GUM G.4.1, eq. G.2b); the coverage factor is t(0.975, ν_eff),
// which is 1.96 when every input's ν is infinite (only Type B), as for a measured reading.
// Movement between two revisions uses the rule for derived targets: real when
// |Δ| > 2·√(u₁² + u₂²) (conformance.movementOf with `derived`).

import type { CellDecision, CellStats, SiRule } from './cellStats'
import { movementOf, statusOf } from './conformance'
import { evaluateDerived, FormulaError, parseFormula } from './derived'
import { StatsOverflowError, tQuantile, welchSatterthwaite } from './readingStats'

/** One input's value on one revision, in SI. */
export interface InputCell {
  mean: number
  /** standard uncertainty; null when the input has none */
  u: number | null
  /** effective degrees of freedom; Infinity when only Type B; null when there is no u */
  nuEff: number | null
}

export interface MeasuredSeries {
  /** display unit (its quantity is what the dimension check needs) */
  unit: string
  /** one entry per revision, in build order; null where the revision has no reading */
  cells: readonly (InputCell | null)[]
}

export interface DerivedSpec {
  key: string
  formula: string
  /** display unit of the derived target */
  unit: string
  rule: SiRule
}

/** One input's share of the derived value's uncertainty on one revision (SI). */
export interface UncertaintyTerm {
  key: string
  /** ∂f/∂x at the means (sensitivity coefficient, GUM 5.1.3) */
  c: number
  /** |c|·u(x), in the SI unit of the result; null when the input has no uncertainty */
  contribution: number | null
}

export type DerivedPoint
  = | { kind: 'value', cell: CellStats, decision: CellDecision, inputs: Record<string, InputCell>, budget: UncertaintyTerm[] }
    | { kind: 'cant-evaluate', reason: string }

/** null: no input has a reading on that revision (the derived target is untested there). */
export type DerivedSeries = (DerivedPoint | null)[]

const cant = (reason: string): DerivedPoint => ({ kind: 'cant-evaluate', reason })

/** Degrees of freedom of u_c = √Σ(cᵢuᵢ)² (GUM G.4.1); Infinity when no term has a finite ν. */
export function derivedNuEff(terms: readonly { contribution: number | null, nuEff: number | null }[]): number {
  const parts = terms
    .filter((t): t is { contribution: number, nuEff: number | null } => t.contribution !== null)
    .map(t => ({ u: t.contribution, nu: t.nuEff ?? Infinity }))
  return parts.length === 0 ? Infinity : welchSatterthwaite(parts)
}

/** Value, uncertainty, interval and budget of one derived target on one revision. */
export function evaluatePoint(spec: DerivedSpec, inputs: Record<string, InputCell & { unit: string }>): DerivedPoint {
  let value
  try {
    value = evaluateDerived(spec.formula, inputs, spec.unit)
  }
  catch (e) {
    return cant(e instanceof FormulaError ? e.message : 'Can\'t evaluate the formula with these values')
  }
  const budget: UncertaintyTerm[] = Object.entries(value.partials).map(([key, c]) => {
    const u = inputs[key]!.u
    return { key, c, contribution: u === null ? null : Math.abs(c) * u }
  })
  let ciLow: number | null = null
  let ciHigh: number | null = null
  let nuEff: number | null = null
  if (value.u !== null) {
    if (!Number.isFinite(value.u)) return cant(new StatsOverflowError('the combined standard uncertainty').message)
    try {
      nuEff = derivedNuEff(budget.map(b => ({ contribution: b.contribution, nuEff: inputs[b.key]!.nuEff })))
    }
    catch (e) {
      if (e instanceof StatsOverflowError) return cant(e.message)
      throw e
    }
    const half = tQuantile(0.975, nuEff) * value.u
    ciLow = value.mean - half
    ciHigh = value.mean + half
    if (!Number.isFinite(ciLow) || !Number.isFinite(ciHigh)) return cant(new StatsOverflowError('the 95 % interval').message)
  }
  const cell: CellStats = { readings: 0, n: 0, mean: value.mean, sd: null, uA: null, uB: null, u: value.u, nuEff, ciLow, ciHigh }
  const status = statusOf({ mean: cell.mean, ci95: ciLow === null ? null : [ciLow, ciHigh!] }, spec.rule) as CellDecision['status']
  const plain: Record<string, InputCell> = {}
  for (const [k, v] of Object.entries(inputs)) plain[k] = { mean: v.mean, u: v.u, nuEff: v.nuEff }
  return { kind: 'value', cell, decision: { status, delta: null, p: null, movement: null, real: null, reason: null }, inputs: plain, budget }
}

/** Fills in each value's movement from the previous revision with a value (derived rule). */
function decideMovements(series: DerivedSeries, rule: SiRule): void {
  let before: Extract<DerivedPoint, { kind: 'value' }> | null = null
  for (const point of series) {
    if (point?.kind !== 'value') continue
    if (before) {
      try {
        const m = movementOf(before.cell, point.cell, rule, { derived: true, uBefore: before.cell.u, uNow: point.cell.u })
        point.decision = { ...point.decision, delta: m.delta, p: m.p, movement: m.movement, real: m.real, reason: m.reason }
      }
      catch (e) {
        // values too far apart to subtract: the point keeps its status, without a movement
        if (!(e instanceof StatsOverflowError)) throw e
      }
    }
    before = point
  }
}

/**
 * Every derived target over `revisions` revisions. Inputs are measured series or other derived
 * targets (evaluated first; formulas that refer to each other in a circle can't be evaluated).
 * A revision where some input has a value and another has none can't be evaluated, and says why.
 */
export function evaluateDerivedTargets(
  specs: readonly DerivedSpec[],
  measured: Readonly<Record<string, MeasuredSeries>>,
  revisions: number,
): Record<string, DerivedSeries> {
  const byKey = new Map(specs.map(s => [s.key, s]))
  const done: Record<string, DerivedSeries> = {}
  // the keys being evaluated, innermost last; a key met again on it closes a circle
  const stack: string[] = []
  const circular = new Set<string>()

  const everywhere = (reason: string): DerivedSeries => Array.from({ length: revisions }, () => cant(reason))
  const circle = (key: string) => everywhere(`The formulas of "${key}" and its inputs refer to each other in a circle`)

  const visit = (spec: DerivedSpec): DerivedSeries => {
    if (done[spec.key]) return done[spec.key]!
    if (stack.includes(spec.key)) {
      for (const k of stack.slice(stack.indexOf(spec.key))) circular.add(k)
      return circle(spec.key)
    }
    let symbols: string[]
    try {
      symbols = parseFormula(spec.formula).symbols
    }
    catch (e) {
      return (done[spec.key] = everywhere(e instanceof Error ? e.message : 'The formula can\'t be read'))
    }
    stack.push(spec.key)
    // each input as a series of cells with its unit
    // a derived input's cell is the reason it can't be evaluated, where it can't
    const sources: Record<string, { unit: string, cells: readonly (InputCell | string | null)[], derived: boolean } | string> = {}
    for (const key of symbols) {
      const nested = byKey.get(key)
      if (nested) {
        const series = visit(nested)
        sources[key] = {
          unit: nested.unit,
          cells: series.map(p => (p === null ? null : p.kind === 'value' ? { mean: p.cell.mean, u: p.cell.u, nuEff: p.cell.nuEff } : p.reason)),
          derived: true,
        }
      }
      else if (measured[key]) sources[key] = { ...measured[key]!, derived: false }
      else sources[key] = `The formula uses "${key}", which is not a target of this build`
    }
    stack.pop()
    if (circular.has(spec.key)) return (done[spec.key] = circle(spec.key))

    const series: DerivedSeries = []
    for (let i = 0; i < revisions; i++) {
      const missing: { key: string, derived: boolean }[] = []
      let anyPresent = false
      let problem: string | null = null
      const inputs: Record<string, InputCell & { unit: string }> = {}
      for (const key of symbols) {
        const source = sources[key]!
        if (typeof source === 'string') {
          problem = source
          continue
        }
        const cell = source.cells[i] ?? null
        if (cell !== null && typeof cell === 'object') {
          anyPresent = true
          inputs[key] = { ...cell, unit: source.unit }
        }
        else {
          // an input that can't be evaluated here still has readings of its own inputs here
          if (typeof cell === 'string') anyPresent = true
          missing.push({ key, derived: source.derived })
        }
      }
      if (problem) series.push(cant(problem))
      else if (!anyPresent) series.push(null)
      else if (missing.length > 0) {
        const list = (ms: typeof missing) => ms.map(m => `"${m.key}"`).join(', ')
        const unread = missing.filter(m => !m.derived)
        const unevaluated = missing.filter(m => m.derived)
        series.push(cant([
          unread.length ? `No reading of ${list(unread)} on this revision` : '',
          unevaluated.length ? `${list(unevaluated)} can't be evaluated on this revision` : '',
        ].filter(Boolean).join('; ')))
      }
      else series.push(evaluatePoint(spec, inputs))
    }
    decideMovements(series, spec.rule)
    return (done[spec.key] = series)
  }

  for (const spec of specs) visit(spec)
  return done
}
