import { createError } from 'h3'
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { FindingSummary } from '#shared/types/findings'
import type { MoveBody } from '#shared/utils/findingSchemas'
import { LANE_LABELS, OVERRIDABLE, laneRefusal, verificationOf, type Lane, type Verification } from '#shared/utils/lanes'
import { RANK_SOFT_LIMIT, rankBetween, spreadRanks } from '#shared/utils/rank'
import type { FindingRow } from '../../db/tables'
import { auditRow, type Actor } from '../audit'
import type { Db } from '../db'
import { prepared } from '../prepared'
import { buildFacts, verificationFactsOf, SUMMARY_COLUMNS, summaryOfRow, type FixJoinedRow, type RevisionCells, type SummaryRow } from './board'
import { staleWrite } from './edit'

// Moving a card on the board under the lane rules. A move mostly takes no lock: moveFinding tries
// it without the board's lock first and, when that can't decide, again under the lock; the lane's
// unique ranks keep two moves from picking the same rank.

/** Serialises writes to one build's board until the transaction ends. */
export async function lockBoard(trx: Knex.Transaction, buildId: string) {
  await trx.raw('SELECT pg_advisory_xact_lock(hashtextextended(?, 0))', [`findings-board:${buildId}`])
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
async function writeIfCurrent(db: Db, id: string, version: number, sets: Record<string, unknown>, event?: { kind: 'moved', actor: Actor, detail: Record<string, unknown> }, auditLog?: MoveAudit, between?: Between): Promise<FindingSummary | null> {
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
    ? `, e AS (INSERT INTO finding_events (finding_id, kind, actor_id, actor_label, detail) SELECT f.id, ${param(event.kind)}, ${param(event.actor.userId)}, ${param(event.actor.name.slice(0, 254))}, ${param(JSON.stringify(event.detail))}::jsonb FROM f)`
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
  const ids = await trx('findings').where({ build_id: f.build_id, lane }).whereNot('id', f.id).orderBy('rank').select('id', 'rank')
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
type MoveAudit = Omit<ReturnType<typeof auditRow>, 'detail'> & { detail?: string }

/**
 * One try of a move (see moveFinding). Without the board's lock (`locked` false) a move is a few
 * statements outside any transaction: where the card goes (and, into Closed, the verification),
 * then one statement that writes it only if its version is unchanged and records its history.
 * Fixes raise their finding's version, so the Retest rule read before still holds at the write,
 * and the lane's unique ranks refuse a rank that a concurrent move took first; the write also
 * checks that the neighbours still hold the ranks read, with nothing between them. An Owner's
 * override writes `auditLog` in the same statement. Answers null when the move needs the lock
 * instead: a lane whose ranks need respreading, a rank taken or neighbours moved meanwhile, or
 * a version that changed (the locked way answers the 409). With the lock (`db` a transaction
 * that called lockBoard) every move works.
 */
async function moveOnce(db: Db, locked: boolean, f: FindingRow, body: z.output<typeof MoveBody>, actor: Actor, auditLog?: MoveAudit): Promise<MoveResult | null> {
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
    // without the lock, a concurrent move took this rank first (or the two met in a deadlock):
    // the locked way places it anew
    if (!locked && isRace(error)) return null
    throw error
  }
  // without the lock, nothing written may also mean the neighbours moved: the locked way decides
  if (!finding && !locked) return null
  if (!finding) throw await staleWrite(db, f.id, body.version)
  return { finding, respread, override: Boolean(override) }
}

/** Two moves of one lane to the same place, again and again: the locked way gives up after this many. */
const LOCKED_TRIES = 5

/** A concurrent move got there first: a rank taken (unique violation) or a deadlock PostgreSQL broke. */
const isRace = (error: unknown) => ['23505', '40P01'].includes((error as { code?: string }).code ?? '')

/**
 * Moves a finding into `lane` between two neighbours (the caller checked that an override comes
 * from an Owner). 409 for a stale version or neighbours that moved; 422 when the lane's rule
 * refuses, unless an Owner overrides it with a reason (kept in the team's audit log, written with
 * the move).
 *
 * The protocol: first without the board's lock (moveOnce, most moves end there); when that can't
 * decide, in a transaction holding the board's lock, which orders moves in a build while the
 * finding's version guards the row itself. A locked move whose commit meets a rank that an
 * unlocked move took meanwhile (the lane's ranks are unique, checked at commit) is placed again
 * from the board as it is then, up to LOCKED_TRIES times, then 409. Called with a transaction
 * (the seed), it takes the board's lock in it and moves once.
 */
export async function moveFinding(db: Db, actor: Actor, input: { finding: FindingRow, teamId: string, body: z.output<typeof MoveBody> }): Promise<MoveResult> {
  const { finding, body } = input
  const auditLog = auditRow(actor.origin, { action: 'finding.override', teamId: input.teamId, actorId: actor.userId, actorLabel: actor.label })
  if (db.isTransaction) {
    await lockBoard(db as Knex.Transaction, finding.build_id)
    return (await moveOnce(db, true, finding, body, actor, auditLog))!
  }
  const quick = await moveOnce(db, false, finding, body, actor, auditLog)
  if (quick) return quick
  for (let attempt = 1; ; attempt++) {
    try {
      return await (db as Knex).transaction(async (trx) => {
        await lockBoard(trx, finding.build_id)
        return (await moveOnce(trx, true, finding, body, actor, auditLog))!
      })
    }
    catch (error) {
      if (!isRace(error)) throw error
      if (attempt === LOCKED_TRIES) {
        throw createError({ statusCode: 409, message: 'Several cards were just moved to the same place. Reload the board and try again.' })
      }
    }
  }
}
