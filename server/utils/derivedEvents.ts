import type { Knex } from 'knex'
import { toSI } from '../../shared/utils/units'
import { recordTargetChange, type TargetSnapshot } from './events'
import { formulaKeys } from './formulas'
import { seriesOf } from './history'
import type { CellRow } from './statsCache'
import type { TargetRow } from './targets'

// Events of derived targets: a reading of an input can make a derived target Met or make it
// slip, like a reading of its own would. Their state is evaluated from the cells (they have
// none cached), before and after the change, in the change's transaction.

/** The derived targets of the build that use `key`, directly or through another derived target. */
function dependentsOf(targets: readonly TargetRow[], key: string): TargetRow[] {
  const derived = targets.filter(t => t.formula !== null && !t.archived_at)
  const found = new Set<string>()
  let frontier = [key]
  while (frontier.length > 0) {
    const next: string[] = []
    for (const t of derived) {
      if (!found.has(t.key) && formulaKeys(t.formula).some(k => frontier.includes(k))) {
        found.add(t.key)
        next.push(t.key)
      }
    }
    frontier = next
  }
  return derived.filter(t => found.has(t.key))
}

export interface DerivedStates {
  targets: TargetRow[]
  states: Map<string, TargetSnapshot | null>
}

/**
 * The latest state (in SI) of every derived target that depends on `key`, and with `self` of the
 * target `key` too (its rule or formula is what changes); null when there is none, which costs
 * one query. Call it before and after the change, then recordDerivedChanges.
 */
export async function derivedStates(trx: Knex.Transaction, buildId: string, key: string, self = false): Promise<DerivedStates | null> {
  const targets = await trx('targets').where({ build_id: buildId }) as TargetRow[]
  const dependents = [...(self ? targets.filter(t => t.key === key) : []), ...dependentsOf(targets, key)]
  if (dependents.length === 0) return null
  const revisions = await trx('revisions').where({ build_id: buildId }).orderBy('seq').select('id', 'label') as { id: string, label: string }[]
  const cells = await trx('cell_stats').where({ build_id: buildId }) as CellRow[]
  const series = seriesOf(targets, revisions, cells)
  const states = new Map<string, TargetSnapshot | null>()
  for (const t of dependents) {
    const latest = series.get(t.id)!.history.at(-1)
    const revision = latest ? revisions.find(r => r.label === latest.revision) : undefined
    states.set(t.id, latest && revision
      ? {
          revisionId: revision.id,
          revision: revision.label,
          status: latest.status,
          movement: latest.movement,
          real: latest.real,
          n: latest.n,
          mean: toSI(latest.mean, t.unit),
          ciLow: latest.ci95 ? toSI(latest.ci95[0], t.unit) : null,
          ciHigh: latest.ci95 ? toSI(latest.ci95[1], t.unit) : null,
        }
      : null)
  }
  return { targets: dependents, states }
}

/** Records target.met / target.slipped for the derived targets whose state the change moved. */
export async function recordDerivedChanges(trx: Knex.Transaction, buildId: string, key: string, before: DerivedStates | null, self = false): Promise<void> {
  if (!before) return
  const after = await derivedStates(trx, buildId, key, self)
  for (const t of before.targets) {
    await recordTargetChange(trx, t, before.states.get(t.id) ?? null, after?.states.get(t.id) ?? null)
  }
}
