import { createError } from 'h3'
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { FindingEventKind, FindingSummary } from '#shared/types/findings'
import type { FindingCreate, FindingPatch } from '#shared/utils/findingSchemas'
import { LANE_LABELS } from '#shared/utils/lanes'
import { rankBetween } from '#shared/utils/rank'
import type { FindingRow } from '../../db/tables'
import type { Actor } from '../audit'
import type { Db } from '../db'
import { recordEvent } from '../notify/events'
import { findingSummary } from './board'
import { lockBoard } from './move'

// Findings written: created at the bottom of Spotted, edited under their version, with their
// history. Plain Knex with the transaction passed in (the seed uses it too).

async function revisionIdOf(db: Db, buildId: string, label: string | null | undefined, field: string): Promise<string | null> {
  if (!label) return null
  const row = await db('revisions').where({ build_id: buildId }).whereRaw('lower(label) = lower(?)', [label]).first('id')
  if (!row) throw createError({ statusCode: 404, message: `${field}: Revision "${label}" not found in this build`, data: { fields: { [field]: 'Not found in this build' } } })
  return row.id
}

async function targetIdsOf(db: Db, buildId: string, keys: string[]): Promise<{ id: string, key: string }[]> {
  if (!keys.length) return []
  const rows = await db('targets').where({ build_id: buildId }).whereIn('key', keys).select('id', 'key')
  const missing = keys.filter(k => !rows.some(r => r.key === k))
  if (missing.length) {
    throw createError({ statusCode: 404, message: `targets: ${missing.map(k => `"${k}"`).join(', ')} not found in this build`, data: { fields: { targets: 'Not found in this build' } } })
  }
  return keys.map(k => rows.find(r => r.key === k)!)
}

/** A line of the finding's history, by `actor` (by name). */
export async function recordFindingEvent(trx: Db, findingId: string, kind: FindingEventKind, actor: Actor, detail: Record<string, unknown>) {
  await trx('finding_events').insert({ finding_id: findingId, kind, actor_id: actor.userId, actor_label: actor.name.slice(0, 254), detail: JSON.stringify(detail) })
}

/** A new finding at the bottom of Spotted. */
export async function createFinding(trx: Knex.Transaction, actor: Actor, input: { buildId: string, body: z.output<typeof FindingCreate> }): Promise<FindingSummary> {
  const { buildId, body } = input
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
  }).returning('id')
  if (targets.length) await trx('finding_targets').insert(targets.map(t => ({ finding_id: row!.id, target_id: t.id })))
  await recordFindingEvent(trx, row!.id, 'created', actor, { severity: body.severity, lane: 'spotted', seenOn: body.seenOn ?? null, targets: targets.map(t => t.key) })
  // reviewers hear of a safety finding (digests)
  if (body.severity === 'safety') await recordEvent(trx, { buildId, type: 'finding.safety', findingId: row!.id, revisionId: seenOn })
  return await findingSummary(trx, row!.id)
}

/** The finding, locked for the rest of the transaction; 404 when it is gone. */
export async function lockFinding(trx: Knex.Transaction, id: string): Promise<FindingRow> {
  const f = await trx('findings').where({ id }).forUpdate().first()
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
export async function editFinding(trx: Knex.Transaction, actor: Actor, input: { finding: FindingRow, patch: z.output<typeof FindingPatch> }): Promise<FindingSummary> {
  const { finding: f, patch } = input
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
      detail.seenOn = { from: before, to: id ? (await trx('revisions').where({ id }).first('label'))!.label : null }
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
