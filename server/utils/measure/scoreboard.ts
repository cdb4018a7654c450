import type { BuildHealth, HistoryEntry, RevisionDetail, ScoreTarget, Scoreboard, TargetDetail } from '#shared/types/api'
import type { Role } from '#shared/utils/roles'
import { marginOf, type TargetStatus } from '#shared/utils/conformance'
import { forecastOfHistory } from '#shared/utils/forecast'
import { comparison, fixesLanded, fixesLandedQuery, fixLandedOf, loadBuildState, moversOf, type FixLandedRow } from './compare'
import { designCautions } from '#shared/utils/designCautions'
import { DesignError, modelKeys, predict } from '#shared/utils/design'
import { FormulaError } from '#shared/utils/derived'
import type { revisionsWithParameters } from './design'
import { effectiveParametersOf, withEffectiveParameters } from './design'
import { formulaKeys } from './formulas'
import { seriesOf, type TargetSeries } from './history'
import type { CellRow, ReadingRow, RevisionRow, TargetRow } from '../../db/tables'
import type { Db } from '../db'
import { batch } from '../prepared'
import { readingDetail, readingsQuery } from './readings'
import { revisionBrief, revisionsQuery, revisionViewOf, type RevisionListRow } from './revisions'
import { isTargetKey, targetNotFound, targetView } from './targets'

// Read models: the scoreboard (target strip and readings matrix in one answer), the target and
// revision pages, and the team's list of builds with their health. Statistics come from the
// cell_stats cache; a page view does a fixed number of queries, whatever the build's size.

interface BuildRef { id: string, slug: string, name: string, summary: string, team_id: string, archived_at: Date | null }

const CELL_COLUMNS = ['target_id', 'revision_id', 'readings', 'stated', 'n', 'mean', 'sd', 'u_a', 'u_b', 'u', 'nu_eff', 'ci_low', 'ci_high', 'status', 'delta', 'p', 'movement', 'real', 'reason']

/** Status, latest entry, margin and forecast of a target from its history (oldest first). */
function standing(t: TargetRow, history: HistoryEntry[], revisions: string[]) {
  const latest = history.at(-1) ?? null
  const view = targetView(t)
  const status: TargetStatus = latest?.status ?? 'untested'
  const margin = latest ? marginOf(latest.mean, view) : null
  const forecast = forecastOfHistory(history, revisions, view)
  return { view, latest, status, margin, forecast }
}

function scoreTarget(t: TargetRow, series: TargetSeries, revisions: string[]): ScoreTarget {
  const { view, latest, status, margin, forecast } = standing(t, series.history, revisions)
  return { ...view, status, latest, margin, history: series.history, cantEvaluate: series.cantEvaluate, forecast }
}

/** A build row as the build routes answer it. */
export function buildView(b: Omit<BuildRef, 'team_id'> & { created_at: Date }) {
  return {
    id: b.id,
    name: b.name,
    slug: b.slug,
    summary: b.summary,
    archived: b.archived_at !== null,
    archivedAt: b.archived_at ? new Date(b.archived_at).toISOString() : null,
    createdAt: new Date(b.created_at).toISOString(),
  }
}

/**
 * GET /api/v1/builds/:build/scoreboard: three queries, run side by side. Archived targets are
 * loaded too (a formula may use one) and left out of the answer; derived targets are evaluated
 * from the cells loaded here, so their number doesn't change the query count.
 */
export async function buildScoreboard(db: Db, build: BuildRef): Promise<Scoreboard> {
  const [targets, revisions, cells] = await batch<[TargetRow, RevisionRow & { parent_label: string | null }, CellRow]>(db, [
    db('targets').where({ build_id: build.id }).orderBy([{ column: 'position' }, { column: 'key' }]),
    db('revisions as r').leftJoin('revisions as p', 'p.id', 'r.parent_id').where('r.build_id', build.id).orderBy('r.seq')
      .select('r.id', 'r.label', 'r.seq', 'r.built_on', 'r.summary', 'r.frozen_at', 'p.label as parent_label'),
    db('cell_stats').where({ build_id: build.id }).select(CELL_COLUMNS),
  ])
  const series = seriesOf(targets, revisions, cells)
  const labels = revisions.map(r => r.label)
  return {
    build: { id: build.id, slug: build.slug, name: build.name, summary: build.summary, archived: build.archived_at !== null, teamId: build.team_id },
    revisions: labels,
    revisionInfo: revisions.map(r => revisionBrief(r, r.parent_label)),
    targets: targets.filter(t => !t.archived_at).map(t => scoreTarget(t, series.get(t.id)!, labels)),
  }
}

/**
 * GET /api/builds/:build/targets/:key: the definition, history (evaluated when derived), every
 * reading, the forecast, and the revisions ranked by how they moved it.
 */
export async function buildTargetDetail(db: Db, build: BuildRef, role: Role, key: string): Promise<TargetDetail> {
  const wanted = String(key).trim()
  if (!isTargetKey(wanted)) throw targetNotFound(key)
  // everything in one round trip: the build's state, the target's readings, the landed fixes
  const [targets, revisionRows, cells, readings, fixRows] = await batch<[TargetRow, RevisionListRow, CellRow, ReadingRow & { revision_label: string, by_user: string | null, by_rig: string | null }, FixLandedRow]>(db, [
    db('targets').where({ build_id: build.id }).orderBy([{ column: 'position' }, { column: 'key' }]),
    revisionsQuery(db, build.id),
    db('cell_stats').where({ build_id: build.id }),
    readingsQuery(db).whereIn('rd.target_id', db('targets').select('id').where({ build_id: build.id, key: wanted })),
    fixesLandedQuery(db, build.id),
  ])
  const t = targets.find(x => x.key === wanted)
  if (!t) throw targetNotFound(key)
  const revisionViews = revisionRows.map(revisionViewOf)
  const state = { targets, revisions: revisionViews, series: seriesOf(targets, revisionViews, cells) }
  const fixes = fixRows.map(fixLandedOf)
  const withParameters = withEffectiveParameters(revisionRows)
  const series = state.series.get(t.id)!
  const labels = state.revisions.map(r => r.label)
  const { view, latest, status, margin, forecast } = standing(t, series.history, labels)
  const byKey = new Map(state.targets.map(x => [x.key, x]))
  const inputs = formulaKeys(t.formula).filter(k => byKey.has(k))
    .map(k => ({ key: k, name: byKey.get(k)!.name, unit: byKey.get(k)!.unit, derived: byKey.get(k)!.formula !== null }))
  return {
    target: view,
    build: { id: build.id, slug: build.slug, name: build.name },
    role,
    status,
    latest,
    margin,
    history: series.history,
    cantEvaluate: series.cantEvaluate,
    readings: readings.map(r => readingDetail(r, t)),
    revisions: labels,
    forecast,
    movers: moversOf(series, state.revisions, fixes),
    inputs,
    cautions: cautionsOf(t, view, latest, withParameters.at(-1) ?? null),
  }
}

/** The target's cautions with numbers, from the latest revision's effective parameters. */
function cautionsOf(t: TargetRow, view: TargetDetail['target'], latest: HistoryEntry | null, rev: Awaited<ReturnType<typeof revisionsWithParameters>>[number] | null) {
  let keys: string[] = []
  let predicted: { value: number, revision: string } | null = null
  if (t.model !== null && rev) {
    try {
      keys = modelKeys(t.model)
      predicted = { value: predict(t.model, rev.effective, t.unit).value, revision: rev.label }
    }
    catch (e) {
      if (!(e instanceof DesignError || e instanceof FormulaError)) throw e
    }
  }
  return designCautions({
    target: { ...view, model: t.model, modelKeys: keys },
    parameters: rev?.effective ?? [],
    measured: latest ? { value: latest.mean, revision: latest.revision } : null,
    predicted,
  })
}

/**
 * GET /api/builds/:build/revisions/:label: the revision with its effective design parameters (its own
 * and those it inherits), its readings grouped by target,
 * derived values, what it moved against its parent, and the fixes that landed in it.
 */
export async function buildRevisionDetail(db: Db, build: BuildRef, role: Role, rev: RevisionRow): Promise<RevisionDetail> {
  const [state, readings, fixes, parameters] = await Promise.all([
    loadBuildState(db, build.id),
    readingsQuery(db).where('rd.revision_id', rev.id) as Promise<(ReadingRow & { revision_label: string, by_user: string | null, by_rig: string | null })[]>,
    fixesLanded(db, build.id, rev.id),
    effectiveParametersOf(db, rev),
  ])
  const view = state.revisions.find(r => r.id === rev.id)!
  const parent = view.parent ? state.revisions.find(r => r.label === view.parent) ?? null : null
  return {
    ...view,
    parameters,
    build: { id: build.id, slug: build.slug, name: build.name },
    role,
    targets: state.targets.filter(t => !t.archived_at).map((t) => {
      const series = state.series.get(t.id)!
      return {
        ...targetView(t),
        stats: series.history.find(h => h.revision === rev.label) ?? null,
        cantEvaluate: series.cantEvaluate.find(c => c.revision === rev.label)?.reason ?? null,
        readings: readings.filter(r => r.target_id === t.id).map(r => readingDetail(r, t)),
      }
    }),
    moved: parent ? comparison(build, state, parent, view, true) : null,
    fixesLanded: fixes,
  }
}

/**
 * The team's builds with their health, newest first: targets met of the active ones (a target's
 * status is that of its latest cell), and the last revision. One query; three more when a build
 * has derived targets, whose status is evaluated from their inputs' cells.
 */
export async function listBuildHealth(db: Db, teamId: string, includeArchived: boolean): Promise<BuildHealth[]> {
  const q = db('builds as b').where('b.team_id', teamId).orderBy('b.created_at', 'desc')
    .select('b.id', 'b.name', 'b.slug', 'b.summary', 'b.archived_at', 'b.created_at',
      db.raw('(SELECT count(*) FROM targets t WHERE t.build_id = b.id AND t.archived_at IS NULL)::int AS targets_total'),
      db.raw('(SELECT count(*) FROM targets t WHERE t.build_id = b.id AND t.archived_at IS NULL AND t.formula IS NOT NULL)::int AS derived_total'),
      db.raw(`(SELECT count(*) FROM targets t WHERE t.build_id = b.id AND t.archived_at IS NULL AND (
          SELECT c.status FROM cell_stats c JOIN revisions r ON r.id = c.revision_id
          WHERE c.target_id = t.id ORDER BY r.seq DESC LIMIT 1) = 'met')::int AS targets_met`),
      db.raw('(SELECT r.label FROM revisions r WHERE r.build_id = b.id ORDER BY r.seq DESC LIMIT 1) AS last_revision'),
      // findings not yet Closed or Parked (shared/utils/lanes.ts OPEN_LANES)
      db.raw(`(SELECT count(*) FROM findings f WHERE f.build_id = b.id AND f.lane IN ('spotted', 'traced', 'bench', 'retest'))::int AS open_findings`))
  if (!includeArchived) q.whereNull('b.archived_at')
  const rows = await q as (BuildRef & { created_at: Date, targets_total: number, derived_total: number, targets_met: number, last_revision: string | null, open_findings: number })[]
  const derivedMet = await derivedMetByBuild(db, rows.filter(b => b.derived_total > 0).map(b => b.id))
  return rows.map(b => ({
    id: b.id,
    name: b.name,
    slug: b.slug,
    summary: b.summary,
    archived: b.archived_at !== null,
    createdAt: new Date(b.created_at).toISOString(),
    targetsMet: b.targets_met + (derivedMet.get(b.id) ?? 0),
    targetsTotal: b.targets_total,
    lastRevision: b.last_revision,
    openFindings: b.open_findings,
  }))
}

/** How many active derived targets of each build are Met (their latest value). */
async function derivedMetByBuild(db: Db, buildIds: string[]): Promise<Map<string, number>> {
  const out = new Map<string, number>()
  if (buildIds.length === 0) return out
  const [targets, revisions, cells] = await Promise.all([
    db('targets').whereIn('build_id', buildIds),
    db('revisions').whereIn('build_id', buildIds).orderBy('seq').select('id', 'build_id', 'label'),
    db('cell_stats').whereIn('build_id', buildIds).select(CELL_COLUMNS.concat('build_id')) as Promise<CellRow[]>,
  ])
  for (const id of buildIds) {
    const own = targets.filter(t => t.build_id === id)
    const series = seriesOf(own, revisions.filter(r => r.build_id === id), cells.filter(c => c.build_id === id))
    out.set(id, own.filter(t => t.formula !== null && !t.archived_at && series.get(t.id)!.history.at(-1)?.status === 'met').length)
  }
  return out
}
