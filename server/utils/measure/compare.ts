import type { Knex } from 'knex'
import type { CantEvaluate, ComparedTarget, CompareSide, Comparison, FixLanded, HistoryEntry, Mover, ParameterDiff, RevisionView, TargetView } from '#shared/types/api'
import { effectiveParameters, type EffectiveParameter } from '#shared/utils/design'
import { compareCells, rankMovements } from '#shared/utils/movers'
import { StatsOverflowError } from '#shared/utils/readingStats'
import { batch } from '../prepared'
import { findRevision, revisionsQuery, revisionViewOf } from './revisions'
import { seriesOf, type TargetSeries } from './history'
import type { CellRow, TargetRow } from '../../db/tables'
import type { Db } from '../db'
import { targetView } from './targets'

// Which revision moved which number: two revisions compared target by target (any A and B, or a
// revision against its parent), the revisions ranked by how they moved one target, and the fixes
// that landed in them. Plain Knex with the connection passed in.

/** Everything the comparisons need of a build, in three queries. */
export interface BuildState {
  targets: TargetRow[]
  revisions: RevisionView[]
  cells: CellRow[]
  series: Map<string, TargetSeries>
}

export async function loadBuildState(db: Db, buildId: string): Promise<BuildState> {
  const [targets, revisionRows, cells] = await batch<[TargetRow, Parameters<typeof revisionViewOf>[0], CellRow]>(db, [
    db('targets').where({ build_id: buildId }).orderBy([{ column: 'position' }, { column: 'key' }]),
    revisionsQuery(db, buildId),
    db('cell_stats').where({ build_id: buildId }),
  ])
  const revisions = revisionRows.map(revisionViewOf)
  return { targets, revisions, cells, series: seriesOf(targets, revisions, cells) }
}

/** Fixes that landed in the build's revisions (or in one), with their findings (one query). */
export async function fixesLanded(db: Db, buildId: string, revisionId?: string): Promise<FixLanded[]> {
  return (await fixesLandedQuery(db, buildId, revisionId)).map(fixLandedOf)
}

export type FixLandedRow = { id: string, description: string, label: string, finding_id: string, title: string, severity: string, lane: string, target_keys: string[] }

/** fixesLanded's query, for reads that send it in a batch; its rows map with fixLandedOf. */
export function fixesLandedQuery(db: Db, buildId: string, revisionId?: string) {
  const q = db('fixes as f')
    .join('findings as fd', 'fd.id', 'f.finding_id')
    .join('revisions as r', 'r.id', 'f.landed_revision_id')
    .where('fd.build_id', buildId)
    .where('f.state', 'landed')
    .orderBy([{ column: 'r.seq' }, { column: 'f.created_at' }])
    .select('f.id', 'f.description', 'r.label', 'fd.id as finding_id', 'fd.title', 'fd.severity', 'fd.lane',
      db.raw(`coalesce((SELECT array_agg(t.key ORDER BY t.position, t.key) FROM finding_targets ft JOIN targets t ON t.id = ft.target_id
        WHERE ft.finding_id = fd.id), '{}') AS target_keys`))
  if (revisionId) q.where('f.landed_revision_id', revisionId)
  return q as unknown as Knex.QueryBuilder<FixLandedRow, FixLandedRow[]>
}

export function fixLandedOf(r: FixLandedRow): FixLanded {
  return {
    id: r.id,
    description: r.description,
    revision: r.label,
    finding: { id: r.finding_id, title: r.title, severity: r.severity, lane: r.lane },
    targets: r.target_keys,
  }
}

function side(h: HistoryEntry): CompareSide {
  return { readings: h.readings, n: h.n, mean: h.mean, sd: h.sd, uA: h.uA, uB: h.uB, u: h.u, nuEff: h.nuEff, ci95: h.ci95, status: h.status }
}

function noteFor(view: TargetView, a: string, b: string, hasA: boolean, hasB: boolean, cant: CantEvaluate[]): string {
  const why = (label: string) => cant.find(c => c.revision === label)?.reason
  const missing = (label: string) => {
    const reason = why(label)
    if (reason) return `Can't evaluate on ${label}: ${reason}`
    return view.derived ? `No value on ${label}: its inputs have no readings there` : `${label} has no reading of this target`
  }
  if (!hasA && !hasB) {
    return why(a) || why(b) ? [hasA ? '' : missing(a), hasB ? '' : missing(b)].filter(Boolean).join('. ') : `Neither ${a} nor ${b} has a reading of this target`
  }
  return missing(hasA ? b : a)
}

/** One target on two revisions: both sides and the movement from A to B. */
export function compareTarget(t: TargetRow, series: TargetSeries, a: string, b: string): ComparedTarget {
  const view = targetView(t)
  const ha = series.history.find(h => h.revision === a) ?? null
  const hb = series.history.find(h => h.revision === b) ?? null
  const none = { delta: null, p: null, movement: null, real: null, reason: null }
  if (!ha || !hb) {
    return { target: view, a: ha && side(ha), b: hb && side(hb), ...none, note: noteFor(view, a, b, Boolean(ha), Boolean(hb), series.cantEvaluate) }
  }
  // in the display unit: the offset cancels in Δ, Welch's p is scale-free, the rule is in the same unit
  let m
  try {
    m = compareCells(ha, hb, view, view.derived)
  }
  catch (e) {
    // the two cells are too far apart to compare in double precision: both sides, no movement
    if (!(e instanceof StatsOverflowError)) throw e
    return { target: view, a: side(ha), b: side(hb), ...none, note: e.message }
  }
  return { target: view, a: side(ha), b: side(hb), delta: m.delta, p: m.p, movement: m.movement, real: m.real, reason: m.reason, note: null }
}

/** A revision's effective design parameters, from the build's revisions (own parameters and parents). */
function effectiveOf(revisions: readonly RevisionView[], label: string): EffectiveParameter[] {
  const byLabel = new Map(revisions.map(r => [r.label, r]))
  const chain: RevisionView['parameters'][] = []
  const seen = new Set<string>()
  for (let r = byLabel.get(label); r && !seen.has(r.label); r = r.parent ? byLabel.get(r.parent) : undefined) {
    seen.add(r.label)
    chain.unshift(r.parameters)
  }
  return effectiveParameters(chain)
}

/** The two revisions' effective parameters side by side, by key (A's order, then B's new ones). */
function parameterDiffs(revisions: readonly RevisionView[], a: RevisionView, b: RevisionView): ParameterDiff[] {
  const pa = effectiveOf(revisions, a.label)
  const pb = effectiveOf(revisions, b.label)
  const keys = [...new Set([...pa.map(p => p.key), ...pb.map(p => p.key)])]
  const shown = (p: EffectiveParameter | undefined) => (p ? { value: p.value, unit: p.unit ?? null, tolerance: p.tolerance ?? null, inherited: p.inherited } : null)
  return keys.map((key) => {
    const x = pa.find(p => p.key === key)
    const y = pb.find(p => p.key === key)
    return {
      key,
      name: (y ?? x)!.name,
      a: shown(x),
      b: shown(y),
      differs: !x || !y || x.value !== y.value || (x.unit ?? null) !== (y.unit ?? null) || (x.tolerance ?? null) !== (y.tolerance ?? null),
    }
  })
}

/** Size of a movement relative to its target's threshold, so targets of different units rank together. */
const relativeSize = (c: ComparedTarget) => Math.abs(c.delta ?? 0) / (Math.abs(c.target.threshold) || 1)

/**
 * Every active target of the build on revisions A and B, and their design parameters side by
 * side. `ranked`: real movements first (a revision's "what it moved"); otherwise strip order.
 */
export function comparison(build: { id: string, slug: string, name: string }, state: BuildState, a: RevisionView, b: RevisionView, ranked = false): Comparison {
  const targets = state.targets.filter(t => !t.archived_at).map(t => compareTarget(t, state.series.get(t.id)!, a.label, b.label))
  return {
    build: { id: build.id, slug: build.slug, name: build.name },
    a,
    b,
    targets: ranked ? rankMovements(targets, relativeSize) : targets,
    parameters: parameterDiffs(state.revisions, a, b),
  }
}

/** The revisions of one target ranked by how they moved it, each with its changes and fixes. */
export function moversOf(series: TargetSeries, revisions: readonly RevisionView[], fixes: readonly FixLanded[]): Mover[] {
  const byLabel = new Map(revisions.map(r => [r.label, r]))
  return rankMovements(series.history.map((h) => {
    const r = byLabel.get(h.revision)
    return {
      revision: h.revision,
      parent: r?.parent ?? null,
      summary: r?.summary ?? '',
      changes: r?.changes ?? [],
      fixes: fixes.filter(f => f.revision === h.revision),
      delta: h.delta,
      p: h.p,
      movement: h.movement,
      real: h.real,
      reason: h.reason,
    }
  }))
}

/** GET /api/builds/:build/compare: revisions A and B of the build (404 for a label not in it). */
export async function compareRevisions(db: Db, build: { id: string, slug: string, name: string }, a: string, b: string): Promise<Comparison> {
  const [ra, rb] = [await findRevision(db, build.id, a), await findRevision(db, build.id, b)]
  const state = await loadBuildState(db, build.id)
  const view = (id: string) => state.revisions.find(r => r.id === id)!
  return comparison(build, state, view(ra.id), view(rb.id))
}
