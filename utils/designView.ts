import type { ParameterView, TargetDesign } from '#shared/types/api'
import { calibrate } from '#shared/utils/design'
import { formatNumber } from './measureFormat'

// What the Design view shows about parameters and calibration, worked out from the API's
// answers: where each effective parameter of a revision comes from and how it differs from the
// parent's, the calibration factor as it stood after each revision, and the parameters a
// what-if changed.

/** A revision as GET /api/v1/builds/:build/revisions lists it (own parameters, parent by label). */
export interface RevisionParams { label: string, parent: string | null, parameters: ParameterView[] }

export interface ParameterRow {
  parameter: ParameterView
  /** set on this revision, or inherited from an ancestor */
  source: 'own' | 'inherited'
  /** the revision that sets it (this one, or the ancestor it is inherited from) */
  from: string
  /** against the parent's effective parameter of the same key; null without a parent */
  change: 'new' | 'changed' | 'same' | null
  /** the parent's value, when it changed */
  before: ParameterView | null
}

/** "50 ± 0.5 mm", "3000 rpm", "6061-T6" */
export function parameterText(p: Pick<ParameterView, 'value' | 'unit' | 'tolerance'>): string {
  if (typeof p.value !== 'number') return p.value
  const tol = p.tolerance != null && p.tolerance > 0 ? ` ± ${formatNumber(p.tolerance)}` : ''
  return `${formatNumber(p.value)}${tol}${p.unit ? ` ${p.unit}` : ''}`
}

const sameParameter = (a: ParameterView, b: ParameterView) =>
  a.value === b.value && (a.unit ?? null) === (b.unit ?? null) && (a.tolerance ?? null) === (b.tolerance ?? null)

/** The effective parameters of one revision, each with where it was set, keyed in first-set order. */
function effectiveWithSource(byLabel: ReadonlyMap<string, RevisionParams>, label: string): Map<string, { parameter: ParameterView, from: string }> {
  const chain: RevisionParams[] = []
  const seen = new Set<string>()
  for (let at = byLabel.get(label); at && !seen.has(at.label); at = at.parent ? byLabel.get(at.parent) : undefined) {
    seen.add(at.label)
    chain.unshift(at)
  }
  const out = new Map<string, { parameter: ParameterView, from: string }>()
  for (const rev of chain) for (const p of rev.parameters) out.set(p.key, { parameter: p, from: rev.label })
  return out
}

/**
 * A revision's effective parameters (its own over its ancestors', as the server's
 * effectiveParameters does), each marked own or inherited and compared with its parent's.
 */
export function parameterRows(revisions: readonly RevisionParams[], label: string): ParameterRow[] {
  const byLabel = new Map(revisions.map(r => [r.label, r]))
  const rev = byLabel.get(label)
  if (!rev) return []
  const mine = effectiveWithSource(byLabel, label)
  const parent = rev.parent && byLabel.has(rev.parent) ? effectiveWithSource(byLabel, rev.parent) : null
  return [...mine.values()].map(({ parameter, from }) => {
    const source = from === label ? 'own' : 'inherited'
    const was = parent?.get(parameter.key)?.parameter ?? null
    const change = parent === null ? null : was === null ? 'new' : sameParameter(was, parameter) ? 'same' : 'changed'
    return { parameter, source, from, change, before: change === 'changed' ? was : null }
  })
}

export interface TrendPoint {
  revision: string
  /** measured / predicted on this revision */
  ratio: { value: number, u: number | null }
  /** the factor over this revision and the ones before it that have a ratio */
  factor: number
  u: number | null
}

/** The calibration factor as it stood after each revision with a ratio (the same rule as the server's). */
export function calibrationTrend(revisions: TargetDesign['revisions']): TrendPoint[] {
  const out: TrendPoint[] = []
  const ratios: { value: number, u: number | null }[] = []
  for (const r of revisions) {
    if (!r.ratio) continue
    ratios.push(r.ratio)
    const cal = calibrate(ratios)!
    out.push({ revision: r.revision, ratio: r.ratio, factor: cal.factor, u: cal.u })
  }
  return out
}

/**
 * The parameters a what-if changed from the base revision's effective ones, as the body of a new
 * revision sets them (key, name, value, unit, tolerance); unchanged ones are left to inheritance.
 */
export function changedParameters(base: readonly ParameterView[], values: Readonly<Record<string, number>>): ParameterView[] {
  return base
    .filter(p => typeof p.value === 'number' && Object.hasOwn(values, p.key) && Number.isFinite(values[p.key]) && values[p.key] !== p.value)
    .map(p => ({ key: p.key, name: p.name, value: values[p.key]!, unit: p.unit, tolerance: p.tolerance }))
}
