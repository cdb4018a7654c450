import type { Knex } from 'knex'
import type { BuildHealth, HistoryEntry, RevisionDetail, ScoreTarget, Scoreboard, TargetDetail } from '../../shared/types/api'
import type { Role } from '../../shared/utils/roles'
import { marginOf, type TargetStatus } from '../../shared/utils/conformance'
import { parseUnit } from '../../shared/utils/units'
import { readingDetail, readingsQuery, type ReadingRow } from './readings'
import { listRevisions, revisionBrief, type RevisionRow } from './revisions'
import { historyEntryOf, type CellRow } from './statsCache'
import { findTarget, targetView, type TargetRow } from './targets'

// Read models: the scoreboard (target strip and readings matrix in one answer), the target and
// revision pages, and the team's list of builds with their health. Statistics come from the
// cell_stats cache; a page view does a fixed number of queries, whatever the build's size.

type Db = Knex | Knex.Transaction

interface BuildRef { id: string, slug: string, name: string, summary: string, team_id: string, archived_at: Date | null }

const CELL_COLUMNS = ['target_id', 'revision_id', 'readings', 'n', 'mean', 'sd', 'u_a', 'u_b', 'u', 'nu_eff', 'ci_low', 'ci_high', 'status', 'delta', 'p', 'movement', 'real', 'reason']

/** Status, latest entry and margin of a target from its history (oldest first). */
function standing(t: TargetRow, history: HistoryEntry[]) {
  const latest = history.at(-1) ?? null
  const view = targetView(t)
  const status: TargetStatus = latest?.status ?? 'untested'
  const margin = latest ? marginOf(latest.mean, view) : null
  return { view, latest, status, margin }
}

function scoreTarget(t: TargetRow, history: HistoryEntry[]): ScoreTarget {
  const { view, latest, status, margin } = standing(t, history)
  return { ...view, status, latest, margin, history }
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

/** GET /api/v1/builds/:build/scoreboard: three queries, run side by side. */
export async function buildScoreboard(db: Db, build: BuildRef): Promise<Scoreboard> {
  const [targets, revisions, cells] = await Promise.all([
    db('targets').where({ build_id: build.id }).whereNull('archived_at').orderBy([{ column: 'position' }, { column: 'key' }]) as Promise<TargetRow[]>,
    db('revisions as r').leftJoin('revisions as p', 'p.id', 'r.parent_id').where('r.build_id', build.id).orderBy('r.seq')
      .select('r.id', 'r.label', 'r.seq', 'r.built_on', 'r.summary', 'r.frozen_at', 'p.label as parent_label') as Promise<(RevisionRow & { parent_label: string | null })[]>,
    db('cell_stats').where({ build_id: build.id }).select(CELL_COLUMNS) as Promise<CellRow[]>,
  ])
  const order = new Map(revisions.map((r, i) => [r.id, i]))
  const byTarget = new Map<string, CellRow[]>()
  for (const t of targets) byTarget.set(t.id, [])
  for (const c of cells) byTarget.get(c.target_id)?.push(c)
  return {
    build: { id: build.id, slug: build.slug, name: build.name, summary: build.summary, archived: build.archived_at !== null, teamId: build.team_id },
    revisions: revisions.map(r => r.label),
    revisionInfo: revisions.map(r => revisionBrief(r, r.parent_label)),
    targets: targets.map((t) => {
      const unit = parseUnit(t.unit)
      const own = byTarget.get(t.id)!.sort((a, b) => order.get(a.revision_id)! - order.get(b.revision_id)!)
      return scoreTarget(t, own.map(c => historyEntryOf(c, revisions[order.get(c.revision_id)!]!.label, unit)))
    }),
  }
}

/** GET /api/builds/:build/targets/:key: the definition, history and every reading. */
export async function buildTargetDetail(db: Db, build: BuildRef, role: Role, key: string): Promise<TargetDetail> {
  const t = await findTarget(db, build.id, key)
  const [cells, readings] = await Promise.all([
    db('cell_stats as c').join('revisions as r', 'r.id', 'c.revision_id').where('c.target_id', t.id).orderBy('r.seq')
      .select([...CELL_COLUMNS.map(c => `c.${c}`), 'r.label']) as Promise<(CellRow & { label: string })[]>,
    readingsQuery(db).where('rd.target_id', t.id) as Promise<(ReadingRow & { revision_label: string, by_user: string | null, by_rig: string | null })[]>,
  ])
  const unit = parseUnit(t.unit)
  const history = cells.map(c => historyEntryOf(c, c.label, unit))
  const { view, latest, status, margin } = standing(t, history)
  return {
    target: view,
    build: { id: build.id, slug: build.slug, name: build.name },
    role,
    status,
    latest,
    margin,
    history,
    readings: readings.map(r => readingDetail(r, t)),
  }
}

/** GET /api/builds/:build/revisions/:label: the revision and its readings, grouped by target. */
export async function buildRevisionDetail(db: Db, build: BuildRef, role: Role, rev: RevisionRow): Promise<RevisionDetail> {
  const [[view], targets, cells, readings] = await Promise.all([
    listRevisions(db, build.id, rev.id),
    db('targets').where({ build_id: build.id }).whereNull('archived_at').orderBy([{ column: 'position' }, { column: 'key' }]) as Promise<TargetRow[]>,
    db('cell_stats').where({ revision_id: rev.id }).select(CELL_COLUMNS) as Promise<CellRow[]>,
    readingsQuery(db).where('rd.revision_id', rev.id) as Promise<(ReadingRow & { revision_label: string, by_user: string | null, by_rig: string | null })[]>,
  ])
  const cellOf = new Map(cells.map(c => [c.target_id, c]))
  return {
    ...view!,
    build: { id: build.id, slug: build.slug, name: build.name },
    role,
    targets: targets.map((t) => {
      const cell = cellOf.get(t.id)
      return {
        ...targetView(t),
        stats: cell ? historyEntryOf(cell, rev.label, parseUnit(t.unit)) : null,
        readings: readings.filter(r => r.target_id === t.id).map(r => readingDetail(r, t)),
      }
    }),
  }
}

/**
 * The team's builds with their health, newest first: targets met of the active ones (a target's
 * status is that of its latest cell), and the last revision. One query.
 */
export async function listBuildHealth(db: Db, teamId: string, includeArchived: boolean): Promise<BuildHealth[]> {
  const q = db('builds as b').where('b.team_id', teamId).orderBy('b.created_at', 'desc')
    .select('b.id', 'b.name', 'b.slug', 'b.summary', 'b.archived_at', 'b.created_at',
      db.raw('(SELECT count(*) FROM targets t WHERE t.build_id = b.id AND t.archived_at IS NULL)::int AS targets_total'),
      db.raw(`(SELECT count(*) FROM targets t WHERE t.build_id = b.id AND t.archived_at IS NULL AND (
          SELECT c.status FROM cell_stats c JOIN revisions r ON r.id = c.revision_id
          WHERE c.target_id = t.id ORDER BY r.seq DESC LIMIT 1) = 'met')::int AS targets_met`),
      db.raw('(SELECT r.label FROM revisions r WHERE r.build_id = b.id ORDER BY r.seq DESC LIMIT 1) AS last_revision'),
      // findings not yet Closed or Parked (shared/utils/lanes.ts OPEN_LANES)
      db.raw(`(SELECT count(*) FROM findings f WHERE f.build_id = b.id AND f.lane IN ('spotted', 'traced', 'bench', 'retest'))::int AS open_findings`))
  if (!includeArchived) q.whereNull('b.archived_at')
  const rows = await q
  return rows.map((b: BuildRef & { created_at: Date, targets_total: number, targets_met: number, last_revision: string | null, open_findings: number }) => ({
    id: b.id,
    name: b.name,
    slug: b.slug,
    summary: b.summary,
    archived: b.archived_at !== null,
    createdAt: new Date(b.created_at).toISOString(),
    targetsMet: b.targets_met,
    targetsTotal: b.targets_total,
    lastRevision: b.last_revision,
    openFindings: b.open_findings,
  }))
}
