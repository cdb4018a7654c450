import type { Knex } from 'knex'
import type { z } from 'zod'
import type { BoardData, CardFix, FindingCard, FindingSummary, FixView } from '#shared/types/findings'
import { hazardOf } from '#shared/utils/caution'
import type { FindingListQuery } from '#shared/utils/findingSchemas'
import { LANES, OPEN_LANES, verificationOf, type CellStatus, type Lane, type Severity, type VerificationFacts } from '#shared/utils/lanes'
import type { Role } from '#shared/utils/roles'
import type { CellRow, TargetRow } from '../../db/tables'
import type { Db } from '../db'
import { batch } from '../prepared'
import { seriesOf } from '../measure/history'

// The board's read model: findings with their targets and fixes (the board's cards, API v1's
// list and one finding's summary), and what the lane rules read of a build. Plain Knex with the
// connection passed in (the seed uses it too).

// timestamps as ISO 8601 text in UTC straight from the database (a board reads thousands)
const isoOf = (column: string) => `to_char(${column} AT TIME ZONE 'UTC', 'YYYY-MM-DD"T"HH24:MI:SS.MS"Z"')`
const ISO_TIMES = `${isoOf('f.created_at')} AS created_at, ${isoOf('f.updated_at')} AS updated_at`

const LANE_ORDER = `array_position(ARRAY[${LANES.map(l => `'${l}'`).join(', ')}]::text[], f.lane::text)`

/** Fixes with their owner and landing revision; for a card (`forCard`), without their ids and texts. */
export function fixesQuery(db: Db, forCard = false) {
  return db('fixes as x')
    .join('findings as f', 'f.id', 'x.finding_id')
    .leftJoin('users as u', 'u.id', 'x.owner_id')
    .leftJoin('revisions as lr', 'lr.id', 'x.landed_revision_id')
    .orderBy([{ column: 'x.created_at' }, { column: 'x.id' }])
    .select(...(forCard ? [] : ['x.id', 'x.description']), 'x.finding_id', 'x.state', 'x.owner_id', 'u.name as owner_name',
      db.raw(`to_char(x.due_on, 'YYYY-MM-DD') AS due_on`), 'lr.label as landed_label', 'lr.seq as landed_seq')
}

export interface FixJoinedRow {
  id: string
  finding_id: string
  description: string
  state: FixView['state']
  owner_id: string | null
  owner_name: string | null
  due_on: string | null
  landed_label: string | null
  landed_seq: number | null
}

/** A fix as a card shows it. */
function cardFixOf(r: FixJoinedRow): CardFix {
  return {
    state: r.state,
    owner: r.owner_id ? { id: r.owner_id, name: r.owner_name ?? 'Former member' } : null,
    dueOn: r.due_on,
    landedIn: r.landed_label,
  }
}

export function fixView(r: FixJoinedRow): FixView {
  return { id: r.id, description: r.description, ...cardFixOf(r) }
}

interface ListedRow {
  id: string
  title: string
  lane: Lane
  severity: Severity
  rank: string
  version: number
  description?: string
  /** ISO 8601 text, formatted by the database (ISO_TIMES) */
  created_at: string
  updated_at: string
  seen_label: string | null
  seen_seq: number | null
}

type ListOptions = z.output<typeof FindingListQuery>

function scoped<T extends Knex.QueryBuilder>(q: T, buildId: string, o: ListOptions): T {
  q.where('f.build_id', buildId)
  if (o.lane) q.where('f.lane', o.lane)
  if (o.severity) q.where('f.severity', o.severity)
  return q
}

export type RevisionCells = (VerificationFacts['revisions'][number] & { id: string })[]

/** What the lane rules and the board read of a build: its revisions, targets and their statuses. */
export interface BuildFacts {
  /** every revision, oldest first */
  revisions: { id: string, label: string, seq: number }[]
  /** every target, archived ones too */
  targets: TargetRow[]
  /**
   * The revisions that hold readings, with the status of each target tested there: measured
   * targets as cached, derived targets evaluated from their inputs' cells.
   */
  cells: RevisionCells
}

export async function buildFacts(db: Db, buildId: string): Promise<BuildFacts> {
  // one round trip (`db` may be a transaction: one connection either way)
  const [revisions, targets, cells] = await batch<[{ id: string, label: string, seq: number }, TargetRow, CellRow]>(db, [
    db('revisions').where({ build_id: buildId }).orderBy('seq').select('id', 'label', 'seq'),
    db('targets').where({ build_id: buildId }),
    db('cell_stats').where({ build_id: buildId }),
  ])
  const derived = targets.filter(t => t.formula !== null)
  const byRevision = new Map<string, Record<string, CellStatus>>()
  const mark = (revisionId: string, targetId: string, status: CellStatus) => {
    const m = byRevision.get(revisionId) ?? {}
    m[targetId] = status
    byRevision.set(revisionId, m)
  }
  for (const c of cells) mark(c.revision_id, c.target_id, c.status)
  if (derived.length) {
    const series = seriesOf(targets, revisions, cells)
    const idOf = new Map(revisions.map(r => [r.label, r.id]))
    for (const t of derived) for (const h of series.get(t.id)?.history ?? []) mark(idOf.get(h.revision)!, t.id, h.status)
  }
  return {
    revisions,
    targets,
    cells: revisions.filter(r => byRevision.has(r.id)).map(r => ({ id: r.id, seq: r.seq, label: r.label, cells: byRevision.get(r.id)! })),
  }
}

/** The build's active targets in strip order. */
export function activeTargets(targets: readonly TargetRow[]): TargetRow[] {
  return targets.filter(t => !t.archived_at).sort((a, b) => a.position - b.position || (a.key < b.key ? -1 : a.key > b.key ? 1 : 0))
}

/** A target's status on the latest revision that tested it, or null. */
export function latestStatus(cells: RevisionCells, targetId: string): CellStatus | null {
  for (let i = cells.length - 1; i >= 0; i--) {
    const status = cells[i]!.cells[targetId]
    if (status) return status
  }
  return null
}

interface Listed {
  rows: ListedRow[]
  targets: Map<string, { id: string, key: string }[]>
  fixes: Map<string, FixJoinedRow[]>
}

/** The build's findings with their targets and fixes; for the board, only what a card shows. */
async function listRows(db: Db, buildId: string, o: ListOptions, forBoard: boolean): Promise<Listed> {
  const [rows, targetRows, fixRows] = await batch<[ListedRow, { finding_id: string, id: string, key: string }, FixJoinedRow]>(db, [
    scoped(db('findings as f').leftJoin('revisions as s', 's.id', 'f.seen_on_revision_id'), buildId, o)
      .select('f.id', 'f.title', 'f.lane', 'f.severity', 'f.rank', 'f.version', 's.label as seen_label', 's.seq as seen_seq',
        ...(forBoard ? ['f.description'] : [db.raw(ISO_TIMES)]))
      .orderByRaw(`${LANE_ORDER}, (f.severity <> 'safety'), f.rank`),
    scoped(db('finding_targets as ft').join('findings as f', 'f.id', 'ft.finding_id').join('targets as t', 't.id', 'ft.target_id'), buildId, o)
      .orderBy([{ column: 't.position' }, { column: 't.key' }])
      .select('ft.finding_id', 't.id', 't.key'),
    scoped(fixesQuery(db, forBoard), buildId, o),
  ])
  const targets = new Map<string, { id: string, key: string }[]>()
  for (const t of targetRows) {
    const list = targets.get(t.finding_id)
    if (list) list.push({ id: t.id, key: t.key })
    else targets.set(t.finding_id, [{ id: t.id, key: t.key }])
  }
  const fixes = new Map<string, FixJoinedRow[]>()
  for (const x of fixRows) {
    const list = fixes.get(x.finding_id)
    if (list) list.push(x)
    else fixes.set(x.finding_id, [x])
  }
  return { rows, targets, fixes }
}

/**
 * What a summary and a card share; each adds its own fields to this object (one shape for
 * thousands of cards: a spread into a new literal costs several times more, here and in JSON).
 */
function cardBase(r: ListedRow, l: Listed): Pick<FindingSummary, 'id' | 'title' | 'lane' | 'severity' | 'rank' | 'version' | 'seenOn' | 'targets'> {
  return {
    id: r.id,
    title: r.title,
    lane: r.lane,
    severity: r.severity,
    rank: r.rank,
    version: r.version,
    seenOn: r.seen_label,
    targets: (l.targets.get(r.id) ?? []).map(t => t.key),
  }
}

function summaryOf(r: ListedRow, l: Listed): FindingSummary {
  const summary = cardBase(r, l) as FindingSummary
  summary.fixes = (l.fixes.get(r.id) ?? []).map(fixView)
  summary.createdAt = r.created_at
  summary.updatedAt = r.updated_at
  return summary
}

// One finding as API v1 shows it, as the select list over a findings row `f`; a SELECT and an
// UPDATE … RETURNING both use it, so a move answers in the statement that makes it.
export const SUMMARY_COLUMNS = `f.id, f.title, f.lane, f.severity, f.rank, f.version, ${ISO_TIMES},
  (SELECT s.label FROM revisions s WHERE s.id = f.seen_on_revision_id) AS seen_label,
  (SELECT s.seq FROM revisions s WHERE s.id = f.seen_on_revision_id) AS seen_seq,
  COALESCE((SELECT json_agg(json_build_object('id', t.id, 'key', t.key) ORDER BY t.position, t.key)
    FROM finding_targets ft JOIN targets t ON t.id = ft.target_id WHERE ft.finding_id = f.id), '[]') AS targets,
  COALESCE((SELECT json_agg(json_build_object('id', x.id, 'finding_id', x.finding_id, 'description', x.description, 'state', x.state,
      'owner_id', x.owner_id, 'owner_name', u.name, 'due_on', to_char(x.due_on, 'YYYY-MM-DD'), 'landed_label', lr.label, 'landed_seq', lr.seq)
      ORDER BY x.created_at, x.id)
    FROM fixes x LEFT JOIN users u ON u.id = x.owner_id LEFT JOIN revisions lr ON lr.id = x.landed_revision_id
    WHERE x.finding_id = f.id), '[]') AS fixes`

export type SummaryRow = ListedRow & { targets: { id: string, key: string }[], fixes: FixJoinedRow[] }

export function summaryOfRow(row: SummaryRow): FindingSummary {
  return summaryOf(row, { rows: [row], targets: new Map([[row.id, row.targets]]), fixes: new Map([[row.id, row.fixes]]) })
}

/** One finding as API v1 shows it, in one statement (the answer to every write). */
export async function findingSummary(db: Db, id: string): Promise<FindingSummary> {
  const { rows } = await db.raw(`SELECT ${SUMMARY_COLUMNS} FROM findings f WHERE f.id = ?`, [id]) as { rows: SummaryRow[] }
  if (!rows[0]) throw createError({ statusCode: 404, message: 'Finding not found' })
  return summaryOfRow(rows[0])
}

/** API v1's list: the build's findings by lane, safety first, then by rank. */
export async function listFindings(db: Db, buildId: string, o: ListOptions = {}): Promise<FindingSummary[]> {
  const l = await listRows(db, buildId, o, false)
  return l.rows.map(r => summaryOf(r, l))
}

export function verificationFactsOf(seen: { seq: number | null, label: string | null }, targets: { id: string, key: string }[], fixes: Pick<FixJoinedRow, 'state' | 'landed_seq' | 'landed_label'>[], revisions: VerificationFacts['revisions']): VerificationFacts {
  return {
    seenOn: seen.seq !== null && seen.label !== null ? { seq: seen.seq, label: seen.label } : null,
    landedIn: fixes.filter(x => x.state === 'landed' && x.landed_seq !== null).map(x => ({ seq: x.landed_seq!, label: x.landed_label! })),
    targets,
    revisions,
  }
}

/** The board: every card with what it shows and filters on, and the choices of the filters. */
export async function buildBoard(db: Db, build: { id: string, slug: string, name: string, team_id: string }, role: Role): Promise<BoardData> {
  const [l, comments, facts, members] = await Promise.all([
    listRows(db, build.id, {}, true),
    db('finding_comments as c').join('findings as f', 'f.id', 'c.finding_id').where('f.build_id', build.id)
      .groupBy('c.finding_id').select('c.finding_id', db.raw('count(*)::int AS n')) as Promise<{ finding_id: string, n: number }[]>,
    buildFacts(db, build.id),
    teamMembers(db, build.team_id),
  ])
  const revisions = facts.cells
  const commentCount = new Map(comments.map(c => [c.finding_id, c.n]))
  const findings: FindingCard[] = l.rows.map((r) => {
    const card = cardBase(r, l) as FindingCard
    card.fixes = (l.fixes.get(r.id) ?? []).map(cardFixOf)
    card.description = r.description ?? ''
    card.comments = commentCount.get(r.id) ?? 0
    card.verifiedOn = null
    card.closeBlocker = null
    // a closed card has nothing left to verify
    if (r.lane !== 'closed') {
      const v = verificationOf(verificationFactsOf({ seq: r.seen_seq, label: r.seen_label }, l.targets.get(r.id) ?? [], l.fixes.get(r.id) ?? [], revisions))
      if (v.revision) card.verifiedOn = v.revision.label
      else card.closeBlocker = v.reason
    }
    return card
  })
  return {
    build: { id: build.id, slug: build.slug, name: build.name },
    role,
    findings,
    members: members.map(m => ({ id: m.id, name: m.name })),
    targets: activeTargets(facts.targets).map(t => ({ key: t.key, name: t.name, quantity: t.quantity, caution: hazardOf(t.quantity) !== null })),
    revisions: facts.revisions.map(r => r.label),
  }
}

export async function teamMembers(db: Db, teamId: string): Promise<{ id: string, name: string, email: string }[]> {
  return await db('memberships as m').join('users as u', 'u.id', 'm.user_id').where('m.team_id', teamId)
    .orderBy('u.name').select('u.id', 'u.name', 'u.email')
}
/** Per target key, the open findings (not Closed or Parked) that hurt it; safety first. */
export async function openFindingsByTarget(db: Db, buildId: string) {
  const rows = await db('findings as f')
    .join('finding_targets as ft', 'ft.finding_id', 'f.id')
    .join('targets as t', 't.id', 'ft.target_id')
    .where('f.build_id', buildId)
    .whereIn('f.lane', OPEN_LANES)
    .orderByRaw(`(f.severity <> 'safety'), f.created_at`)
    .select('t.key', 'f.id', 'f.title', 'f.severity') as { key: string, id: string, title: string, severity: Severity }[]
  const out: Record<string, { id: string, title: string, severity: Severity }[]> = {}
  for (const r of rows) (out[r.key] ??= []).push({ id: r.id, title: r.title, severity: r.severity })
  return out
}
