import type { Knex } from 'knex'
import { targetTransition, type TargetState } from '#shared/utils/targetEvents'
import { parseUnit, toSI } from '#shared/utils/units'
import type { TargetRow } from '../../db/tables'
import type { Db } from '../db'
import { recordEvent } from '../notify/events'
import { formulaKeys } from './formulas'
import { seriesOf } from './history'

// target.met and target.slipped: a target's state (its latest cell) before and after a change,
// in the change's transaction. trackTargetEvents is the one way in: readings and target edits
// call it around the change. Derived targets have no cached cells: their state is evaluated from
// their inputs' cells, so a reading of an input can make a derived target Met or make it slip,
// like a reading of its own would.

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

interface DerivedStates {
  targets: TargetRow[]
  states: Map<string, TargetSnapshot | null>
}

/**
 * The latest state (in SI) of every derived target that depends on `key`, and with `self` of the
 * target `key` too (its rule or formula is what changes); null when there is none, which costs
 * one query. Call it before and after the change, then recordDerivedChanges.
 */
async function derivedStates(trx: Knex.Transaction, buildId: string, key: string, self = false): Promise<DerivedStates | null> {
  const targets = await trx('targets').where({ build_id: buildId })
  const dependents = [...(self ? targets.filter(t => t.key === key) : []), ...dependentsOf(targets, key)]
  if (dependents.length === 0) return null
  const revisions = await trx('revisions').where({ build_id: buildId }).orderBy('seq').select('id', 'label')
  const cells = await trx('cell_stats').where({ build_id: buildId })
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
async function recordDerivedChanges(trx: Knex.Transaction, buildId: string, key: string, before: DerivedStates | null, self = false): Promise<void> {
  if (!before) return
  const after = await derivedStates(trx, buildId, key, self)
  for (const t of before.targets) {
    await recordTargetChange(trx, t, before.states.get(t.id) ?? null, after?.states.get(t.id) ?? null)
  }
}

/** A target's latest cell, as far as events care, with the numbers in SI. */
export interface TargetSnapshot extends TargetState {
  revision: string
  n: number
  mean: number
  ciLow: number | null
  ciHigh: number | null
}

async function targetSnapshot(db: Db, targetId: string): Promise<TargetSnapshot | null> {
  const row = await db('cell_stats as c').join('revisions as r', 'r.id', 'c.revision_id')
    .where('c.target_id', targetId).orderBy('r.seq', 'desc')
    .first('c.revision_id', 'r.label', 'c.status', 'c.movement', 'c.real', 'c.n', 'c.mean', 'c.ci_low', 'c.ci_high')
  if (!row) return null
  return { revisionId: row.revision_id, revision: row.label, status: row.status, movement: row.movement, real: row.real, n: row.n, mean: row.mean, ciLow: row.ci_low, ciHigh: row.ci_high }
}

function shown(s: TargetSnapshot | null, factor: number, offset: number) {
  if (!s) return { status: 'untested' }
  const at = (v: number | null) => (v === null ? null : (v - offset) / factor)
  return { status: s.status, revision: s.revision, n: s.n, mean: at(s.mean), ci95: s.ciLow === null ? null : [at(s.ciLow), at(s.ciHigh)] }
}

/**
 * Compares a target's state before and after a change (same transaction) and records
 * `target.met` or `target.slipped`, with before → after in the target's display unit.
 * `given`: the state after, when it isn't a cached cell (a derived target's).
 */
async function recordTargetChange(trx: Knex.Transaction, target: { id: string, build_id: string, unit: string }, before: TargetSnapshot | null, given?: TargetSnapshot | null) {
  const after = given !== undefined ? given : await targetSnapshot(trx, target.id)
  const change = targetTransition(before, after)
  if (!change || !after) return
  const unit = parseUnit(target.unit)
  await recordEvent(trx, {
    buildId: target.build_id,
    type: change.type,
    targetId: target.id,
    revisionId: after.revisionId,
    before: { ...shown(before, unit.factor, unit.offset), unit: unit.unit },
    after: { ...shown(after, unit.factor, unit.offset), unit: unit.unit },
    detail: change.type === 'target.slipped' ? { reasons: change.reasons } : {},
  })
}

/**
 * Runs `change`, which rewrites cached cells of `target` (a reading added or deleted, its rule
 * edited), between two looks at the target's state, and records target.met / target.slipped for
 * every target whose state it moved: `own` the target's latest cached cell (off for a derived
 * target, which has none), `derived` the derived targets that use it ('dependents'), or those and
 * the target itself when it is derived and its rule or formula is what changes ('self').
 * Call it in the change's transaction, holding the target's row lock.
 */
export async function trackTargetEvents<T>(trx: Knex.Transaction, target: TargetRow, change: () => Promise<T>, scope: { own?: boolean, derived?: 'dependents' | 'self' | 'none' } = {}): Promise<T> {
  const own = scope.own ?? true
  const derived = scope.derived ?? 'dependents'
  const before = own ? await targetSnapshot(trx, target.id) : null
  const derivedBefore = derived === 'none' ? null : await derivedStates(trx, target.build_id, target.key, derived === 'self')
  const result = await change()
  if (own) await recordTargetChange(trx, target, before)
  if (derived !== 'none') await recordDerivedChanges(trx, target.build_id, target.key, derivedBefore, derived === 'self')
  return result
}
