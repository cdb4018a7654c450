import type { BudgetTerm, CantEvaluate, HistoryEntry } from '#shared/types/api'
import { cellInUnit } from '#shared/utils/cellStats'
import { evaluateDerivedTargets, type DerivedPoint, type DerivedSpec, type InputCell, type MeasuredSeries } from '#shared/utils/derivedCells'
import { diffFromSI, fromSI, parseUnit, type UnitInfo } from '#shared/utils/units'
import type { CellRow, TargetRow } from '../../db/tables'
import { historyEntryOf } from './statsCache'

// Every target's history across the build's revisions, from the cells the caller has already
// loaded: measured targets as cached in cell_stats, derived targets evaluated in memory from
// their inputs' cells (no query of their own, so a page's query count doesn't grow with them).
// Plain imports: the seed and the benchmark use this outside the server.
// (targetEvents.ts uses it for the derived targets' digest events.)

export interface TargetSeries {
  /** one entry per revision with a value, oldest first */
  history: HistoryEntry[]
  /** derived targets: revisions with inputs but no value */
  cantEvaluate: CantEvaluate[]
}

function inputCell(c: CellRow): InputCell {
  return { mean: c.mean, u: c.u, nuEff: c.u === null ? null : (c.nu_eff ?? Infinity) }
}

function derivedEntry(point: Extract<DerivedPoint, { kind: 'value' }>, revision: string, unit: UnitInfo, units: Map<string, UnitInfo>): HistoryEntry {
  const d = point.decision
  const uc = point.cell.u
  const budget: BudgetTerm[] = point.budget.map((term) => {
    const input = point.inputs[term.key]!
    const inUnit = units.get(term.key)!
    return {
      key: term.key,
      mean: fromSI(input.mean, inUnit),
      u: input.u === null ? null : diffFromSI(input.u, inUnit),
      unit: inUnit.unit,
      contribution: term.contribution === null ? null : diffFromSI(term.contribution, unit),
      share: term.contribution === null || !uc ? null : (term.contribution / uc) ** 2,
    }
  })
  return {
    revision,
    readings: 0,
    stated: 0,
    ...cellInUnit(point.cell, unit),
    status: d.status,
    delta: d.delta === null ? null : d.delta / unit.factor,
    p: d.p,
    movement: d.movement,
    real: d.real,
    reason: d.reason,
    budget,
  }
}

/**
 * The history of every target in `targets` (give all of the build's targets, archived ones too:
 * a formula may use one). `revisions` in build order; `cells` of the build, any order.
 */
export function seriesOf(
  targets: readonly TargetRow[],
  revisions: readonly { id: string, label: string }[],
  cells: readonly CellRow[],
): Map<string, TargetSeries> {
  const order = new Map(revisions.map((r, i) => [r.id, i]))
  const units = new Map(targets.map(t => [t.key, parseUnit(t.unit)]))
  const own = new Map<string, CellRow[]>(targets.map(t => [t.id, []]))
  for (const c of cells) if (order.has(c.revision_id)) own.get(c.target_id)?.push(c)

  const out = new Map<string, TargetSeries>()
  const measured: Record<string, MeasuredSeries> = {}
  for (const t of targets) {
    if (t.formula !== null) continue
    const list = own.get(t.id)!.sort((a, b) => order.get(a.revision_id)! - order.get(b.revision_id)!)
    const unit = units.get(t.key)!
    out.set(t.id, { history: list.map(c => historyEntryOf(c, revisions[order.get(c.revision_id)!]!.label, unit)), cantEvaluate: [] })
    const series: (InputCell | null)[] = revisions.map(() => null)
    for (const c of list) series[order.get(c.revision_id)!] = inputCell(c)
    measured[t.key] = { unit: t.unit, cells: series }
  }

  const derived = targets.filter(t => t.formula !== null)
  if (derived.length === 0) return out
  const specs: DerivedSpec[] = derived.map(t => ({
    key: t.key,
    formula: t.formula!,
    unit: t.unit,
    rule: { comparator: t.comparator, threshold: t.threshold, thresholdHigh: t.threshold_high, noiseBand: t.noise_band },
  }))
  const evaluated = evaluateDerivedTargets(specs, measured, revisions.length)
  for (const t of derived) {
    const unit = units.get(t.key)!
    const series: TargetSeries = { history: [], cantEvaluate: [] }
    evaluated[t.key]!.forEach((point, i) => {
      const revision = revisions[i]!.label
      if (point?.kind === 'value') series.history.push(derivedEntry(point, revision, unit, units))
      else if (point?.kind === 'cant-evaluate') series.cantEvaluate.push({ revision, reason: point.reason })
    })
    out.set(t.id, series)
  }
  return out
}
