import type { Knex } from 'knex'
import { targetTransition, type TargetState } from '../../shared/utils/targetEvents'
import { parseUnit } from '../../shared/utils/units'

// Plain imports (no auto-imports): the seed and the benchmark use these outside the server.

let afterCommit: () => void = () => {}

/** The queue plugin sets what happens once an event's transaction commits (a nudge to deliver). */
export function onEventsCommitted(fn: () => void) {
  afterCommit = fn
}

type Db = Knex | Knex.Transaction

export type EventType = 'target.met' | 'target.slipped' | 'finding.safety' | 'revision.frozen'

export interface NewEvent {
  buildId: string
  type: EventType
  targetId?: string | null
  revisionId?: string | null
  findingId?: string | null
  before?: Record<string, unknown> | null
  after?: Record<string, unknown> | null
  detail?: Record<string, unknown>
}

/**
 * Records an event in the caller's transaction; once that transaction commits, the queue is
 * asked to deliver it (a sweep every minute catches any nudge that was lost).
 */
export async function recordEvent(trx: Db, e: NewEvent) {
  const row: Record<string, unknown> = {
    build_id: e.buildId,
    type: e.type,
    target_id: e.targetId ?? null,
    revision_id: e.revisionId ?? null,
    before: e.before ? JSON.stringify(e.before) : null,
    after: e.after ? JSON.stringify(e.after) : null,
    detail: JSON.stringify(e.detail ?? {}),
  }
  if (e.findingId) row.finding_id = e.findingId
  await trx('events').insert(row)
  const done = (trx as Knex.Transaction).executionPromise
  if (done) done.then(() => afterCommit(), () => {})
  else afterCommit()
}

/** A target's latest cell, as far as events care, with the numbers in SI. */
export interface TargetSnapshot extends TargetState {
  revision: string
  n: number
  mean: number
  ciLow: number | null
  ciHigh: number | null
}

export async function targetSnapshot(db: Db, targetId: string): Promise<TargetSnapshot | null> {
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
export async function recordTargetChange(trx: Knex.Transaction, target: { id: string, build_id: string, unit: string }, before: TargetSnapshot | null, given?: TargetSnapshot | null) {
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
