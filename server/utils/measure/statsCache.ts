import type { HistoryEntry } from '#shared/types/api'
import { cellInUnit, decideCells, poolCell, type CellDecision, type CellStats, type SiRule } from '#shared/utils/cellStats'
import type { UnitInfo } from '#shared/utils/units'
import type { CellRow, StatsRow } from '../../db/tables'
import type { Db } from '../db'

// The cache of pooled statistics per (target, revision) in `cell_stats`. Plain Knex with the
// connection passed in, so the seed and the benchmark fill it with the same code as the server.
// Callers hold the target's row lock (FOR UPDATE) for the whole transaction.

/** What the cache needs to know about a target. */
export interface CellTarget extends SiRule {
  id: string
  buildId: string
}

/**
 * The statistics of a stored row in SI: a cell of cell_stats, or one reading (readings has the
 * same columns, and counts as one reading).
 */
export function cellOfRow(r: StatsRow & { readings?: number, stated?: number }): CellStats {
  return { readings: r.readings ?? 1, stated: r.stated ?? 0, n: r.n, mean: r.mean, sd: r.sd, uA: r.u_a, uB: r.u_b, u: r.u, nuEff: r.nu_eff, ciLow: r.ci_low, ciHigh: r.ci_high }
}

/** The columns of statistics in SI, for a row of readings or of cell_stats. */
export function statsColumns(c: Omit<CellStats, 'readings'>): StatsRow {
  return { n: c.n, mean: c.mean, sd: c.sd, u_a: c.uA, u_b: c.uB, u: c.u, nu_eff: c.nuEff, ci_low: c.ciLow, ci_high: c.ciHigh }
}

export function cellRowOf(target: CellTarget, revisionId: string, c: CellStats, d: CellDecision): CellRow {
  return { target_id: target.id, revision_id: revisionId, build_id: target.buildId, readings: c.readings, stated: c.stated ?? 0, ...statsColumns(c), ...decisionColumns(d) }
}

function decisionColumns(d: CellDecision) {
  return { status: d.status, delta: d.delta, p: d.p, movement: d.movement, real: d.real, reason: d.reason }
}

/** A cached cell as the API shows it, in the target's display unit. */
export function historyEntryOf(r: CellRow, revision: string, unit: UnitInfo): HistoryEntry {
  return {
    revision,
    readings: r.readings,
    stated: r.stated,
    ...cellInUnit(cellOfRow(r), unit),
    status: r.status,
    delta: r.delta === null ? null : r.delta / unit.factor,
    p: r.p,
    movement: r.movement,
    real: r.real,
    reason: r.reason,
  }
}

/**
 * Pools the readings of one cell again (after a reading was added or deleted), then re-decides
 * the target's statuses and movements, which depend on the neighbouring cells. Returns the
 * cell's row, or null when no reading is left in it.
 */
export async function refreshCell(trx: Db, target: CellTarget, revisionId: string): Promise<CellRow | null> {
  const readings = await trx('readings').where({ target_id: target.id, revision_id: revisionId })
    .select('values_si', 'resolution_si', 'stated_u_si', 'stated_dof')
  if (readings.length === 0) {
    await trx('cell_stats').where({ target_id: target.id, revision_id: revisionId }).delete()
  }
  else {
    const cell = poolCell(readings.map(r => ({ values: r.values_si, resolution: r.resolution_si, u: r.stated_u_si, dof: r.stated_dof })))
    // the decision columns are filled in by redecideTarget below
    const row = cellRowOf(target, revisionId, cell, { status: 'short', delta: null, p: null, movement: null, real: null, reason: null })
    await trx('cell_stats').insert(row).onConflict(['target_id', 'revision_id']).merge()
  }
  const rows = await redecideTarget(trx, target)
  return rows.find(r => r.revision_id === revisionId) ?? null
}

/**
 * Status and movement of every cached cell of one target, from the cached statistics (after a
 * cell or the target's rule changed). Writes only the rows whose decision changed; returns all.
 */
export async function redecideTarget(trx: Db, target: CellTarget): Promise<CellRow[]> {
  const rows = await trx('cell_stats as c').join('revisions as r', 'r.id', 'c.revision_id')
    .where('c.target_id', target.id).orderBy('r.seq').select('c.*') as CellRow[]
  const decisions = decideCells(rows.map(cellOfRow), target)
  const changed: (Pick<CellRow, 'target_id' | 'revision_id'> & ReturnType<typeof decisionColumns>)[] = []
  rows.forEach((row, i) => {
    const d = decisionColumns(decisions[i]!)
    if ((Object.keys(d) as (keyof typeof d)[]).some(k => row[k] !== d[k])) {
      Object.assign(row, d)
      changed.push({ target_id: row.target_id, revision_id: row.revision_id, ...d })
    }
  })
  if (changed.length > 0) {
    await trx.raw(`
      UPDATE cell_stats AS c
      SET status = v.status, delta = v.delta, p = v.p, movement = v.movement, real = v.real, reason = v.reason, updated_at = now()
      FROM jsonb_to_recordset(?::jsonb) AS v(target_id uuid, revision_id uuid, status text, delta float8, p float8, movement text, real boolean, reason text)
      WHERE c.target_id = v.target_id AND c.revision_id = v.revision_id`, [JSON.stringify(changed)])
  }
  return rows
}
