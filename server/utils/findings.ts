import type { H3Event } from 'h3'
import { createError } from 'h3'
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { BoardData, CardFix, FindingCard, FindingSummary, FixView } from '../../shared/types/findings'
import { hazardOf } from '../../shared/utils/caution'
import type { FindingCreate, FindingListQuery, FindingPatch, MoveBody } from '../../shared/utils/findingSchemas'
import { LANES, LANE_LABELS, OPEN_LANES, OVERRIDABLE, laneRefusal, verificationOf, type CellStatus, type Lane, type Severity, type Verification, type VerificationFacts } from '../../shared/utils/lanes'
import { RANK_SOFT_LIMIT, rankBetween, spreadRanks } from '../../shared/utils/rank'
import { roleAtLeast, type Role } from '../../shared/utils/roles'
import type { BuildAccess, BuildRow } from './auth'
import type { auditRow } from './audit'
import { recordEvent } from './events'
import { seriesOf } from './history'
import { prepared } from './prepared'
import type { CellRow } from './statsCache'
import type { TargetRow } from './targets'

// Findings and the board: listing, creating, editing and moving them under the lane rules.
// Plain Knex with the connection passed in (the seed uses it too). A new card takes the board's
// lock; a move mostly doesn't (moveFinding says when it does), and the lane's unique ranks keep
// two moves from picking the same rank.

type Db = Knex | Knex.Transaction

export interface FindingRow {
  id: string
  build_id: string
  title: string
  description: string
  severity: Severity
  lane: Lane
  rank: string
  version: number
  seen_on_revision_id: string | null
  closed_at: Date | null
  verified_revision_id: string | null
  override_reason: string | null
  override_by: string | null
  created_by: string | null
  created_by_rig: string | null
  created_at: Date
  updated_at: Date
}

/** Who writes: a person, or a rig token (API v1). */
export interface FindingActor {
  userId: string | null
  rigTokenId: string | null
  /** a name for the history */
  label: string
  role: Role
}

export function findingActor(access: Pick<BuildAccess, 'user' | 'rigTokenId' | 'actorLabel' | 'role'>): FindingActor {
  return { userId: access.user?.id ?? null, rigTokenId: access.rigTokenId, label: access.user?.name ?? access.actorLabel, role: access.role }
}

export interface FindingAccess extends BuildAccess {
  findingId: string
  /** the finding as it was when the request came in (writes lock it, or check its version as they write) */
  finding: FindingRow
}

const findingNotFound = () => createError({ statusCode: 404, message: 'Finding not found' })

/** A finding in a build the caller can't see reads as one that doesn't exist: same status, same words. */
async function asFindingNotFound<T>(access: Promise<T>): Promise<T> {
  try {
    return await access
  }
  catch (err) {
    throw (err as { statusCode?: number }).statusCode === 404 ? findingNotFound() : err
  }
}

/**
 * The caller's access to a finding's build. Signed-out callers get a 401 before anything is looked
 * up; a finding outside the caller's teams is a 404; a role too low a 403 (requireBuildRole's).
 */
export async function requireFindingRole(event: H3Event, min: Role, opts: { allowRigToken?: boolean } = {}): Promise<FindingAccess> {
  const id = uuidParam(event, 'id')
  const db = useDb()
  if (opts.allowRigToken && bearerToken(event)) {
    const finding = await db('findings').where({ id }).first() as FindingRow | undefined
    if (!finding) throw findingNotFound()
    return { ...await asFindingNotFound(requireBuildRole(event, finding.build_id, min, opts)), findingId: id, finding }
  }
  // the session's check, and the finding with its build and the caller's role there, side by side
  const session = await getUserSession(event)
  const [user, row] = await Promise.all([
    requireUser(event),
    session.user
      ? prepared<FindingRow & { build: BuildRow, member_role: Role | null }>(db, `
          SELECT f.*, to_jsonb(b) AS build, m.role AS member_role FROM findings f JOIN builds b ON b.id = f.build_id
          LEFT JOIN memberships m ON m.team_id = b.team_id AND m.user_id = $1 WHERE f.id = $2`, [session.user.id, id]).then(rows => rows[0])
      : null,
  ])
  if (!row) throw findingNotFound()
  const { build, member_role: role, ...finding } = row
  // outside the team or below the role: the usual 404 or 403, worded by requireBuildRole
  if (!roleAtLeast(role, min)) return { ...await asFindingNotFound(requireBuildRole(event, build.id, min)), findingId: id, finding }
  return { build, role: role!, user, rigTokenId: null, actorId: user.id, actorLabel: user.email, findingId: id, finding }
}

/** Serialises writes to one build's board until the transaction ends. */
export async function lockBoard(trx: Knex.Transaction, buildId: string) {
  await trx.raw('SELECT pg_advisory_xact_lock(hashtextextended(?, 0))', [`findings-board:${buildId}`])
}

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

type RevisionCells = (VerificationFacts['revisions'][number] & { id: string })[]

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
  // one after the other: `db` may be a transaction (one connection)
  const revisions = await db('revisions').where({ build_id: buildId }).orderBy('seq').select('id', 'label', 'seq') as { id: string, label: string, seq: number }[]
  const targets = await db('targets').where({ build_id: buildId }) as TargetRow[]
  const derived = targets.filter(t => t.formula !== null)
  const cells = await db('cell_stats').where({ build_id: buildId }).select(derived.length ? '*' : ['revision_id', 'target_id', 'status']) as CellRow[]
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
  const [rows, targetRows, fixRows] = await Promise.all([
    scoped(db('findings as f').leftJoin('revisions as s', 's.id', 'f.seen_on_revision_id'), buildId, o)
      .select('f.id', 'f.title', 'f.lane', 'f.severity', 'f.rank', 'f.version', 's.label as seen_label', 's.seq as seen_seq',
        ...(forBoard ? ['f.description'] : [db.raw(ISO_TIMES)]))
      .orderByRaw(`${LANE_ORDER}, (f.severity <> 'safety'), f.rank`) as Promise<ListedRow[]>,
    scoped(db('finding_targets as ft').join('findings as f', 'f.id', 'ft.finding_id').join('targets as t', 't.id', 'ft.target_id'), buildId, o)
      .orderBy([{ column: 't.position' }, { column: 't.key' }])
      .select('ft.finding_id', 't.id', 't.key') as Promise<{ finding_id: string, id: string, key: string }[]>,
    scoped(fixesQuery(db, forBoard), buildId, o) as Promise<FixJoinedRow[]>,
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
const SUMMARY_COLUMNS = `f.id, f.title, f.lane, f.severity, f.rank, f.version, ${ISO_TIMES},
  (SELECT s.label FROM revisions s WHERE s.id = f.seen_on_revision_id) AS seen_label,
  (SELECT s.seq FROM revisions s WHERE s.id = f.seen_on_revision_id) AS seen_seq,
  COALESCE((SELECT json_agg(json_build_object('id', t.id, 'key', t.key) ORDER BY t.position, t.key)
    FROM finding_targets ft JOIN targets t ON t.id = ft.target_id WHERE ft.finding_id = f.id), '[]') AS targets,
  COALESCE((SELECT json_agg(json_build_object('id', x.id, 'finding_id', x.finding_id, 'description', x.description, 'state', x.state,
      'owner_id', x.owner_id, 'owner_name', u.name, 'due_on', to_char(x.due_on, 'YYYY-MM-DD'), 'landed_label', lr.label, 'landed_seq', lr.seq)
      ORDER BY x.created_at, x.id)
    FROM fixes x LEFT JOIN users u ON u.id = x.owner_id LEFT JOIN revisions lr ON lr.id = x.landed_revision_id
    WHERE x.finding_id = f.id), '[]') AS fixes`

type SummaryRow = ListedRow & { targets: { id: string, key: string }[], fixes: FixJoinedRow[] }

function summaryOfRow(row: SummaryRow): FindingSummary {
  return summaryOf(row, { rows: [row], targets: new Map([[row.id, row.targets]]), fixes: new Map([[row.id, row.fixes]]) })
}

/** One finding as API v1 shows it, in one statement (the answer to every write). */
export async function findingSummary(db: Db, id: string): Promise<FindingSummary> {
  const { rows } = await db.raw(`SELECT ${SUMMARY_COLUMNS} FROM findings f WHERE f.id = ?`, [id]) as { rows: SummaryRow[] }
  if (!rows[0]) throw createError({ statusCode: 404, message: 'Finding not found' })
  return summaryOfRow(rows[0])
}

/** Where a move without the board's lock put the card: writeIfCurrent checks it still holds. */
interface Between { buildId: string, lane: Lane, prev: string | null, next: string | null }

/** Marks a value for writeIfCurrent: the database's clock. */
const NOW = Symbol('now')

/**
 * Writes `sets` to the finding only if it is still at `version` (raising the version), records
 * `event` in its history when given, and returns its summary; null when someone else wrote
 * first. One statement.
 */
async function writeIfCurrent(db: Db, id: string, version: number, sets: Record<string, unknown>, event?: { kind: 'moved', actor: FindingActor, detail: Record<string, unknown> }, auditLog?: MoveAudit, between?: Between): Promise<FindingSummary | null> {
  const values: unknown[] = []
  const param = (v: unknown) => `$${values.push(v)}`
  const assign = Object.entries(sets).map(([c, v]) => `${c} = ${v === NOW ? 'now()' : param(v)}`)
  let where = `u.id = ${param(id)} AND u.version = ${param(version)}`
  if (between) {
    // the neighbours still hold the ranks read, with no card between them
    const lane = `p.build_id = ${param(between.buildId)} AND p.lane = ${param(between.lane)} AND p.id <> u.id`
    const prev = param(between.prev)
    const next = param(between.next)
    where += ` AND NOT EXISTS (SELECT 1 FROM findings p WHERE ${lane} AND (${prev}::text IS NULL OR p.rank > ${prev}::text) AND (${next}::text IS NULL OR p.rank < ${next}::text))`
      + ` AND (${prev}::text IS NULL OR EXISTS (SELECT 1 FROM findings p WHERE ${lane} AND p.rank = ${prev}::text))`
      + ` AND (${next}::text IS NULL OR EXISTS (SELECT 1 FROM findings p WHERE ${lane} AND p.rank = ${next}::text))`
  }
  const history = event
    ? `, e AS (INSERT INTO finding_events (finding_id, kind, actor_id, actor_label, detail) SELECT f.id, ${param(event.kind)}, ${param(event.actor.userId)}, ${param(event.actor.label.slice(0, 254))}, ${param(JSON.stringify(event.detail))}::jsonb FROM f)`
    : ''
  const audited = auditLog
    ? `, a AS (INSERT INTO audit_log (${Object.keys(auditLog).join(', ')}) SELECT ${Object.entries(auditLog).map(([c, v]) => (c === 'detail' ? `${param(v)}::jsonb` : param(v))).join(', ')} FROM f)`
    : ''
  // prepared: the text depends only on which columns change, so a few texts cover every move
  const rows = await prepared<SummaryRow>(db, `
    WITH f AS (UPDATE findings AS u SET ${[...assign, 'version = u.version + 1', 'updated_at = now()'].join(', ')}
      WHERE ${where} RETURNING u.*)${history}${audited}
    SELECT ${SUMMARY_COLUMNS} FROM f`, values)
  return rows[0] ? summaryOfRow(rows[0]) : null
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

// ---- writes ------------------------------------------------------------------------------------

async function revisionIdOf(db: Db, buildId: string, label: string | null | undefined, field: string): Promise<string | null> {
  if (!label) return null
  const row = await db('revisions').where({ build_id: buildId }).whereRaw('lower(label) = lower(?)', [label]).first('id')
  if (!row) throw createError({ statusCode: 404, message: `${field}: Revision "${label}" not found in this build`, data: { fields: { [field]: 'Not found in this build' } } })
  return row.id
}

async function targetIdsOf(db: Db, buildId: string, keys: string[]): Promise<{ id: string, key: string }[]> {
  if (!keys.length) return []
  const rows = await db('targets').where({ build_id: buildId }).whereIn('key', keys).select('id', 'key') as { id: string, key: string }[]
  const missing = keys.filter(k => !rows.some(r => r.key === k))
  if (missing.length) {
    throw createError({ statusCode: 404, message: `targets: ${missing.map(k => `"${k}"`).join(', ')} not found in this build`, data: { fields: { targets: 'Not found in this build' } } })
  }
  return keys.map(k => rows.find(r => r.key === k)!)
}

export async function recordFindingEvent(trx: Db, findingId: string, kind: 'created' | 'edited' | 'moved' | 'fix-added' | 'fix-edited', actor: FindingActor, detail: Record<string, unknown>) {
  await trx('finding_events').insert({ finding_id: findingId, kind, actor_id: actor.userId, actor_label: actor.label.slice(0, 254), detail: JSON.stringify(detail) })
}

/** A new finding at the bottom of Spotted. */
export async function createFinding(trx: Knex.Transaction, buildId: string, body: z.output<typeof FindingCreate>, actor: FindingActor): Promise<FindingSummary> {
  const seenOn = await revisionIdOf(trx, buildId, body.seenOn, 'seenOn')
  const targets = await targetIdsOf(trx, buildId, body.targets ?? [])
  await lockBoard(trx, buildId)
  const last = await trx('findings').where({ build_id: buildId, lane: 'spotted' }).orderBy('rank', 'desc').first('rank')
  const [row] = await trx('findings').insert({
    build_id: buildId,
    title: body.title,
    description: body.description ?? '',
    severity: body.severity,
    lane: 'spotted',
    rank: rankBetween(last?.rank ?? null, null),
    seen_on_revision_id: seenOn,
    created_by: actor.userId,
    created_by_rig: actor.rigTokenId,
  }).returning('id') as { id: string }[]
  if (targets.length) await trx('finding_targets').insert(targets.map(t => ({ finding_id: row!.id, target_id: t.id })))
  await recordFindingEvent(trx, row!.id, 'created', actor, { severity: body.severity, lane: 'spotted', seenOn: body.seenOn ?? null, targets: targets.map(t => t.key) })
  // reviewers hear of a safety finding (digests)
  if (body.severity === 'safety') await recordEvent(trx, { buildId, type: 'finding.safety', findingId: row!.id, revisionId: seenOn })
  return await findingSummary(trx, row!.id)
}

/** The finding, locked for the rest of the transaction; 404 when it is gone. */
export async function lockFinding(trx: Knex.Transaction, id: string): Promise<FindingRow> {
  const f = await trx('findings').where({ id }).forUpdate().first() as FindingRow | undefined
  if (!f) throw createError({ statusCode: 404, message: 'Finding not found' })
  return f
}

const EVENT_WORDS: Record<string, string> = { 'created': 'created it', 'edited': 'edited it', 'moved': 'moved it', 'fix-added': 'added a fix', 'fix-edited': 'changed a fix' }

/** 409 for a write that names an older version, with the finding as it is now. */
export async function staleWrite(trx: Db, id: string, sent: number) {
  const last = await trx('finding_events').where({ finding_id: id }).orderBy('id', 'desc').first('kind', 'actor_label', 'detail') as { kind: string, actor_label: string, detail: { to?: Lane } } | undefined
  const current = await findingSummary(trx, id)
  let what = ''
  if (last) {
    what = last.kind === 'moved' && last.detail.to ? `moved it to ${LANE_LABELS[last.detail.to]}` : EVENT_WORDS[last.kind] ?? 'changed it'
    what = ` Latest change: ${last.actor_label || 'someone'} ${what}.`
  }
  return createError({
    statusCode: 409,
    message: `This finding changed since you loaded it (you had version ${sent}, it is now at ${current.version}).${what} Reload it and try again.`,
    data: { current, version: current.version },
  })
}

async function bumpVersion(trx: Knex.Transaction, id: string, changes: Record<string, unknown> = {}) {
  await trx('findings').where({ id }).update({ ...changes, version: trx.raw('version + 1'), updated_at: trx.fn.now() })
}

/** Edits title, description, severity, seen-on revision and targets; 409 for a stale version. */
export async function editFinding(trx: Knex.Transaction, f: FindingRow, patch: z.output<typeof FindingPatch>, actor: FindingActor): Promise<FindingSummary> {
  if (patch.version !== f.version) throw await staleWrite(trx, f.id, patch.version)
  const changes: Record<string, unknown> = {}
  const detail: Record<string, unknown> = {}
  if (patch.title !== undefined && patch.title !== f.title) {
    changes.title = patch.title
    detail.title = { from: f.title, to: patch.title }
  }
  if (patch.description !== undefined && patch.description !== f.description) {
    changes.description = patch.description
    detail.description = { edited: true }
  }
  if (patch.severity !== undefined && patch.severity !== f.severity) {
    changes.severity = patch.severity
    detail.severity = { from: f.severity, to: patch.severity }
  }
  if (patch.seenOn !== undefined) {
    const id = await revisionIdOf(trx, f.build_id, patch.seenOn, 'seenOn')
    if (id !== f.seen_on_revision_id) {
      const before = f.seen_on_revision_id ? (await trx('revisions').where({ id: f.seen_on_revision_id }).first('label'))?.label ?? null : null
      changes.seen_on_revision_id = id
      detail.seenOn = { from: before, to: id ? (await trx('revisions').where({ id }).first('label')).label : null }
    }
  }
  if (patch.targets !== undefined) {
    const next = await targetIdsOf(trx, f.build_id, patch.targets)
    const now = await trx('finding_targets as ft').join('targets as t', 't.id', 'ft.target_id').where('ft.finding_id', f.id).select('t.id', 't.key') as { id: string, key: string }[]
    const added = next.filter(t => !now.some(n => n.id === t.id))
    const removed = now.filter(n => !next.some(t => t.id === n.id))
    if (removed.length) await trx('finding_targets').where({ finding_id: f.id }).whereIn('target_id', removed.map(t => t.id)).delete()
    if (added.length) await trx('finding_targets').insert(added.map(t => ({ finding_id: f.id, target_id: t.id })))
    if (added.length || removed.length) detail.targets = { added: added.map(t => t.key), removed: removed.map(t => t.key) }
  }
  if (Object.keys(detail).length) {
    await bumpVersion(trx, f.id, changes)
    await recordFindingEvent(trx, f.id, 'edited', actor, detail)
  }
  if (changes.severity === 'safety') {
    await recordEvent(trx, { buildId: f.build_id, type: 'finding.safety', findingId: f.id, revisionId: (changes.seen_on_revision_id as string | null | undefined) ?? f.seen_on_revision_id })
  }
  return await findingSummary(trx, f.id)
}

/** What the lane rules look at for one finding, in one statement; `revisionIds` maps a revision's seq to its id. */
export async function laneFactsOf(db: Db, f: FindingRow): Promise<{ landedFixes: number, verification: Verification, revisionIds: Map<number, string> }> {
  const [row] = await prepared<{ seen: { seq: number, label: string } | null, targets: { id: string, key: string, derived: boolean }[], fixes: Pick<FixJoinedRow, 'state' | 'landed_seq' | 'landed_label'>[], revisions: RevisionCells }>(db, `
    SELECT
      (SELECT json_build_object('seq', s.seq, 'label', s.label) FROM revisions s WHERE s.id = $2) AS seen,
      (SELECT coalesce(json_agg(json_build_object('id', t.id, 'key', t.key, 'derived', t.formula IS NOT NULL) ORDER BY t.position, t.key), '[]')
        FROM finding_targets ft JOIN targets t ON t.id = ft.target_id WHERE ft.finding_id = $1) AS targets,
      (SELECT coalesce(json_agg(json_build_object('state', x.state, 'landed_seq', lr.seq, 'landed_label', lr.label)), '[]')
        FROM fixes x LEFT JOIN revisions lr ON lr.id = x.landed_revision_id WHERE x.finding_id = $1) AS fixes,
      (SELECT coalesce(json_agg(json_build_object('id', r.id, 'seq', r.seq, 'label', r.label, 'cells', c.cells) ORDER BY r.seq), '[]')
        FROM revisions r JOIN (SELECT revision_id, json_object_agg(target_id, status) AS cells FROM cell_stats WHERE build_id = $3 GROUP BY revision_id) c
          ON c.revision_id = r.id) AS revisions`,
  [f.id, f.seen_on_revision_id, f.build_id])
  // a derived target has no cached cells: evaluate the build's (rare, and more queries)
  const revisions = row!.targets.some(t => t.derived) ? (await buildFacts(db, f.build_id)).cells : row!.revisions
  const targets = row!.targets.map(({ id, key }) => ({ id, key }))
  const facts = verificationFactsOf(row!.seen ?? { seq: null, label: null }, targets, row!.fixes, revisions)
  return { landedFixes: facts.landedIn.length, verification: verificationOf(facts), revisionIds: new Map(revisions.map(r => [r.seq, r.id])) }
}

interface Neighbour { id: string, lane: Lane, rank: string, title: string, prev_rank: string | null, next_rank: string | null }

function boardChanged(message: string) {
  return createError({ statusCode: 409, message: `The board changed since you loaded it: ${message}. Reload the board and try again.` })
}

interface Place {
  /** the ranks the moved card goes between (null: the start or the end of the lane) */
  prev: string | null
  next: string | null
  /** fixes of the moved card that landed in a revision (what the Retest rule needs) */
  landedFixes: number
}

/** Where the moved card goes, from the neighbours the caller named, and its landed fixes: one query. */
async function placeOf(db: Db, f: FindingRow, lane: Lane, before?: string, after?: string): Promise<Place> {
  const ids = [before, after].filter((x): x is string => Boolean(x))
  if (ids.includes(f.id)) throw createError({ statusCode: 400, message: 'A card can’t be placed next to itself', data: { fields: { [before === f.id ? 'before' : 'after']: 'The moved card itself' } } })
  // each named neighbour with the ranks around it in its lane, leaving the moved card out
  const rows = await prepared<{ last_rank: string | null, landed: number, neighbours: Neighbour[] }>(db, `
    SELECT
      (SELECT max(p.rank) FROM findings p WHERE p.build_id = $1 AND p.lane = $2 AND p.id <> $3) AS last_rank,
      (SELECT count(*) FROM fixes x WHERE x.finding_id = $3 AND x.state = 'landed' AND x.landed_revision_id IS NOT NULL) AS landed,
      (SELECT coalesce(json_agg(json_build_object('id', n.id, 'lane', n.lane, 'rank', n.rank, 'title', n.title,
        'prev_rank', (SELECT p.rank FROM findings p WHERE p.build_id = n.build_id AND p.lane = n.lane AND p.rank < n.rank AND p.id <> $3 ORDER BY p.rank DESC LIMIT 1),
        'next_rank', (SELECT p.rank FROM findings p WHERE p.build_id = n.build_id AND p.lane = n.lane AND p.rank > n.rank AND p.id <> $3 ORDER BY p.rank ASC LIMIT 1))), '[]')
        FROM findings n WHERE n.build_id = $1 AND n.id = ANY($4::uuid[])) AS neighbours`,
  [f.build_id, lane, f.id, ids])
  const { last_rank: lastRank, neighbours } = rows[0]!
  const landedFixes = Number(rows[0]!.landed)
  const find = (id: string | undefined, field: string) => {
    if (!id) return null
    const row = neighbours.find(r => r.id === id)
    if (!row) throw createError({ statusCode: 404, message: `${field}: No such finding on this board`, data: { fields: { [field]: 'Not on this board' } } })
    if (row.lane !== lane) throw boardChanged(`“${row.title}” is in ${LANE_LABELS[row.lane]}, not ${LANE_LABELS[lane]}`)
    return row
  }
  const below = find(before, 'before')
  const above = find(after, 'after')
  if (above && below) {
    if (!(above.rank < below.rank)) throw boardChanged(`“${above.title}” is no longer above “${below.title}”`)
    return { prev: above.rank, next: below.rank, landedFixes }
  }
  if (below) return { prev: below.prev_rank, next: below.rank, landedFixes }
  if (above) return { prev: above.rank, next: above.next_rank, landedFixes }
  return { prev: lastRank, next: null, landedFixes }
}

/** Gives the lane fresh, short ranks with the moved card between `prev` and `next`; returns its rank. */
async function respreadLane(trx: Knex.Transaction, f: FindingRow, lane: Lane, prev: string | null): Promise<string> {
  const ids = await trx('findings').where({ build_id: f.build_id, lane }).whereNot('id', f.id).orderBy('rank').select('id', 'rank') as { id: string, rank: string }[]
  const at = prev === null ? 0 : ids.findIndex(r => r.rank === prev) + 1
  const order = [...ids.slice(0, at).map(r => r.id), f.id, ...ids.slice(at).map(r => r.id)]
  const ranks = spreadRanks(order.length)
  const others = order.map((id, i) => [id, ranks[i]!] as const).filter(([id]) => id !== f.id)
  if (others.length) {
    await trx.raw(`UPDATE findings AS f SET rank = v.rank FROM (VALUES ${others.map(() => '(?::uuid, ?)').join(', ')}) AS v(id, rank) WHERE f.id = v.id`, others.flat())
  }
  return ranks[at]!
}

export interface MoveResult {
  finding: FindingSummary
  /** other cards of the lane got new ranks too (rare): reload the lane */
  respread: boolean
  /** an Owner's override let it in */
  override: boolean
}

/** The audit_log row an override writes with the move (auditRow's), its detail filled in by the move. */
export type MoveAudit = Omit<ReturnType<typeof auditRow>, 'detail'> & { detail?: string }

/**
 * Moves a finding into `lane` between two neighbours. 409 for a stale version or neighbours that
 * moved; 422 when the lane's rule refuses, unless an Owner overrides it with a reason.
 *
 * Two ways, one set of rules. Without the board's lock (`locked` false) a move is a few statements
 * outside any transaction: where the card goes (and, into Closed, the verification), then one
 * statement that writes it only if its version is unchanged and records its history. Fixes raise
 * their finding's version, so the Retest rule read before still holds at the write, and the lane's
 * unique ranks refuse a rank that a concurrent move took first; the write also checks that the
 * neighbours still hold the ranks read, with nothing between them. An Owner's override writes
 * `auditLog` (when given) in the same statement. Answers null when the move needs the lock
 * instead: a lane whose ranks need respreading, a rank taken or neighbours moved meanwhile, or a
 * version that changed (the locked way answers the 409). With the lock (`db` a transaction that
 * called lockBoard) every move works.
 */
export async function moveFinding(db: Db, locked: boolean, f: FindingRow, body: z.output<typeof MoveBody>, actor: FindingActor, auditLog?: MoveAudit): Promise<MoveResult | null> {
  if (body.override && actor.role !== 'owner') {
    throw createError({ statusCode: 403, message: 'Only an Owner can override a lane rule' })
  }
  const lane = body.lane
  const changesLane = lane !== f.lane
  // `f` was read before the request's statements: the write below checks the version again
  if (body.version !== f.version) throw await staleWrite(db, f.id, body.version)
  let override: { reason: string, rule: string } | null = null
  let verifiedBy: { id: string | null, label: string } | null = null
  const { prev, next, landedFixes } = await placeOf(db, f, lane, body.before, body.after)
  if (changesLane && (lane === 'retest' || lane === 'closed')) {
    const facts = lane === 'retest' ? { landedFixes, verification: { revision: null, reason: '' }, revisionIds: new Map<number, string>() } : await laneFactsOf(db, f)
    const refusal = laneRefusal(lane, facts)
    if (refusal) {
      if (!body.override || !OVERRIDABLE.includes(lane)) {
        throw createError({ statusCode: 422, message: refusal, data: { rule: lane, reason: refusal, canOverride: actor.role === 'owner' } })
      }
      override = { reason: body.override.reason, rule: refusal }
    }
    else if (lane === 'closed' && facts.verification.revision) {
      const { seq, label } = facts.verification.revision
      verifiedBy = { id: facts.revisionIds.get(seq) ?? null, label }
    }
  }

  let rank: string
  let respread = false
  if (!changesLane && (prev === null || prev < f.rank) && (next === null || f.rank < next)) rank = f.rank
  else {
    rank = rankBetween(prev, next)
    if (rank.length > RANK_SOFT_LIMIT) {
      if (!locked) return null
      rank = await respreadLane(db as Knex.Transaction, f, lane, prev)
      respread = true
    }
  }

  const closing: Record<string, unknown> = {}
  if (changesLane && lane === 'closed') {
    closing.closed_at = NOW
    closing.verified_revision_id = verifiedBy?.id ?? null
    closing.override_reason = override?.reason ?? null
    closing.override_by = override ? actor.userId : null
  }
  else if (changesLane && f.lane === 'closed') {
    Object.assign(closing, { closed_at: null, verified_revision_id: null, override_reason: null, override_by: null })
  }
  const moved = changesLane
    ? { kind: 'moved' as const, actor, detail: { from: f.lane, to: lane, ...(verifiedBy ? { verifiedBy: verifiedBy.label } : {}), ...(override ? { override } : {}) } }
    : undefined
  let finding: FindingSummary | null
  try {
    const audited = override && auditLog ? { ...auditLog, detail: JSON.stringify({ finding: f.id, from: f.lane, to: lane, reason: override.reason }) } : undefined
    finding = await writeIfCurrent(db, f.id, body.version, { lane, rank, ...closing }, moved, audited, locked ? undefined : { buildId: f.build_id, lane, prev, next })
  }
  catch (error) {
    // without the lock, a concurrent move took this rank first: the locked way places it anew
    if (!locked && (error as { code?: string }).code === '23505') return null
    throw error
  }
  // without the lock, nothing written may also mean the neighbours moved: the locked way decides
  if (!finding && !locked) return null
  if (!finding) throw await staleWrite(db, f.id, body.version)
  return { finding, respread, override: Boolean(override) }
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
