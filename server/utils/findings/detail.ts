import type { Knex } from 'knex'
import type { z } from 'zod'
import type { CommentView, FindingDetail, FindingEventKind } from '#shared/types/findings'
import { hazardOf } from '#shared/utils/caution'
import type { CommentBody } from '#shared/utils/findingSchemas'
import { verificationOf } from '#shared/utils/lanes'
import type { Role } from '#shared/utils/roles'
import type { Quantity } from '#shared/utils/units'
import { findMentions, renderMarkdown } from './markdown'
import type { FindingRow } from '../../db/tables'
import type { Actor } from '../audit'
import type { Db } from '../db'
import { activeTargets, buildFacts, findingSummary, fixesQuery, latestStatus, teamMembers, verificationFactsOf, type FixJoinedRow } from './board'

// The finding page (description, targets, fixes, verification, comments, history) and comments.

interface CommentRow {
  id: string
  body: string
  mentions: string[]
  created_at: Date
  author_name: string | null
}

function commentView(r: CommentRow, names: Map<string, string>): CommentView {
  return {
    id: r.id,
    body: r.body,
    html: renderMarkdown(r.body),
    author: r.author_name,
    mentions: r.mentions.filter(id => names.has(id)).map(id => ({ id, name: names.get(id)! })),
    createdAt: new Date(r.created_at).toISOString(),
  }
}

const commentsQuery = (db: Db) => db('finding_comments as c').leftJoin('users as u', 'u.id', 'c.author_id')
  .orderBy([{ column: 'c.created_at' }, { column: 'c.id' }])
  .select('c.id', 'c.body', 'c.mentions', 'c.created_at', 'u.name as author_name')

/** Names of the given users (mentioned people may have left the team since). */
async function namesOf(db: Db, ids: string[]): Promise<Map<string, string>> {
  if (!ids.length) return new Map()
  const rows = await db('users').whereIn('id', [...new Set(ids)]).select('id', 'name')
  return new Map(rows.map(r => [r.id, r.name]))
}

/** A comment by a member; "@name" mentions are matched against the team as it is now. */
export async function addComment(trx: Knex.Transaction, actor: Actor, input: { finding: FindingRow, teamId: string, body: z.output<typeof CommentBody> }): Promise<CommentView> {
  const { finding: f, teamId } = input
  const body = input.body
  const authorId = actor.userId!
  const members = await teamMembers(trx, teamId)
  const mentions = findMentions(body.body, members)
  const [row] = await trx('finding_comments').insert({ finding_id: f.id, author_id: authorId, body: body.body, mentions }).returning('id')
  // the people to e-mail (mentions.ts), not the author
  const notify = mentions.filter(id => id !== authorId)
  if (notify.length) await trx('mention_notices').insert(notify.map(id => ({ comment_id: row!.id, user_id: id })))
  const saved = await commentsQuery(trx).where('c.id', row!.id).first() as CommentRow
  return commentView(saved, new Map(members.map(m => [m.id, m.name])))
}

export async function findingDetail(db: Db, id: string, build: { id: string, slug: string, name: string, team_id: string }, role: Role): Promise<FindingDetail> {
  const [row, targets, fixes, comments, events, facts, members] = await Promise.all([
    db('findings as f').leftJoin('revisions as s', 's.id', 'f.seen_on_revision_id')
      .leftJoin('users as cu', 'cu.id', 'f.created_by').leftJoin('rig_tokens as k', 'k.id', 'f.created_by_rig')
      .leftJoin('users as ou', 'ou.id', 'f.override_by')
      .where('f.id', id)
      .first('f.*', 's.label as seen_label', 's.seq as seen_seq', 'cu.name as creator', 'k.name as creator_rig', 'ou.name as override_by_name') as Promise<FindingRow & { seen_label: string | null, seen_seq: number | null, creator: string | null, creator_rig: string | null, override_by_name: string | null }>,
    db('finding_targets as ft').join('targets as t', 't.id', 'ft.target_id').where('ft.finding_id', id)
      .orderBy([{ column: 't.position' }, { column: 't.key' }])
      .select('t.id', 't.key', 't.name', 't.unit', 't.quantity') as Promise<{ id: string, key: string, name: string, unit: string, quantity: Quantity }[]>,
    fixesQuery(db).where('x.finding_id', id) as Promise<FixJoinedRow[]>,
    commentsQuery(db).where('c.finding_id', id) as Promise<CommentRow[]>,
    db('finding_events as e').leftJoin('users as u', 'u.id', 'e.actor_id').where('e.finding_id', id).orderBy('e.id', 'desc')
      .select('e.id', 'e.kind', 'e.at', 'e.detail', 'e.actor_label', 'u.name as actor_name') as Promise<{ id: number, kind: FindingEventKind, at: Date, detail: Record<string, unknown>, actor_label: string, actor_name: string | null }[]>,
    buildFacts(db, build.id),
    teamMembers(db, build.team_id),
  ])
  const revisions = facts.cells
  const summary = await findingSummary(db, id)
  const names = await namesOf(db, comments.flatMap(c => c.mentions))
  const verification = verificationOf(verificationFactsOf({ seq: row.seen_seq, label: row.seen_label }, targets.map(t => ({ id: t.id, key: t.key })), fixes, revisions))
  return {
    ...summary,
    description: row.description,
    descriptionHtml: renderMarkdown(row.description),
    comments: comments.length,
    verifiedOn: verification.revision?.label ?? null,
    closeBlocker: verification.revision ? null : verification.reason,
    build: { id: build.id, slug: build.slug, name: build.name },
    role,
    targetInfo: targets.map(t => ({ key: t.key, name: t.name, unit: t.unit, quantity: t.quantity, caution: hazardOf(t.quantity) !== null, status: latestStatus(revisions, t.id) ?? 'untested' })),
    verification: { revision: verification.revision?.label ?? null, reason: verification.reason },
    commentList: comments.map(c => commentView(c, names)),
    history: events.map(e => ({ id: Number(e.id), kind: e.kind, at: new Date(e.at).toISOString(), actor: e.actor_name ?? e.actor_label ?? 'someone', detail: e.detail })),
    members: members.map(m => ({ id: m.id, name: m.name })),
    revisions: facts.revisions.map(r => r.label),
    buildTargets: activeTargets(facts.targets).map(t => ({ key: t.key, name: t.name, quantity: t.quantity, caution: hazardOf(t.quantity) !== null })),
    createdBy: row.creator ?? (row.creator_rig ? `rig token ${row.creator_rig}` : null),
    closedAt: row.closed_at ? new Date(row.closed_at).toISOString() : null,
    override: row.override_reason ? { reason: row.override_reason, by: row.override_by_name } : null,
  }
}
