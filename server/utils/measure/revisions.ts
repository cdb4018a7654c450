import { createError } from 'h3'
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { RevisionBrief, RevisionView } from '#shared/types/api'
import type { RevisionBody, RevisionPatch } from '#shared/utils/revisionSchemas'
import type { RevisionRow } from '../../db/tables'
import type { Db } from '../db'
import { recordEvent } from '../notify/events'
import { parametersToStore } from './design'

// Revisions of a build. Plain Knex with the connection passed in (the seed uses it too).
// A frozen (signed-off) revision and its readings are read-only until an Owner reopens it.

const REVISION_LABEL = /^[A-Za-z0-9][A-Za-z0-9._-]{0,39}$/

function notFound(label: string, field = 'revision') {
  return createError({ statusCode: 404, message: `Revision "${label}" not found in this build`, data: { fields: { [field]: 'Not found in this build' } } })
}

/** A revision by its label (any case); 404 otherwise. `lock`: 'update' to change it, 'share' to add to it. */
export async function findRevision(db: Db, buildId: string, label: string, lock?: 'update' | 'share'): Promise<RevisionRow> {
  const wanted = String(label).trim()
  const q = db('revisions').where({ build_id: buildId }).whereRaw('lower(label) = lower(?)', [wanted]).first()
  // a label that can't exist is not looked up (nor is text PostgreSQL would refuse)
  const row = REVISION_LABEL.test(wanted) ? await (lock === 'update' ? q.forUpdate() : lock === 'share' ? q.forShare() : q) : undefined
  if (!row) throw notFound(label)
  return row
}

export function assertOpen(rev: RevisionRow, doing = 'change its readings') {
  if (rev.frozen_at) {
    throw createError({ statusCode: 409, message: `Revision ${rev.label} is frozen (signed off); an Owner must reopen it to ${doing}` })
  }
}

function dateOnly(d: string | Date | null): string | null {
  if (d === null) return null
  if (typeof d === 'string') return d.slice(0, 10)
  // a DATE column comes back as local midnight; format it in local time
  return `${d.getFullYear()}-${String(d.getMonth() + 1).padStart(2, '0')}-${String(d.getDate()).padStart(2, '0')}`
}

export function revisionBrief(r: RevisionRow, parentLabel: string | null): RevisionBrief {
  return {
    id: r.id,
    label: r.label,
    seq: r.seq,
    parent: parentLabel,
    builtOn: dateOnly(r.built_on),
    summary: r.summary,
    frozen: r.frozen_at !== null,
    frozenAt: r.frozen_at ? new Date(r.frozen_at).toISOString() : null,
  }
}

export async function insertRevision(trx: Knex.Transaction, buildId: string, body: z.output<typeof RevisionBody>, createdBy: string | null): Promise<RevisionView> {
  // serialises revision creation in the build (the label check and the order)
  await trx('builds').where({ id: buildId }).forUpdate().first('id')
  if (await trx('revisions').where({ build_id: buildId }).whereRaw('lower(label) = lower(?)', [body.label]).first('id')) {
    throw createError({ statusCode: 409, message: `label: A revision labelled "${body.label}" exists in this build; choose another`, data: { fields: { label: 'Taken' } } })
  }
  let parent: RevisionRow | null = null
  if (body.parent) parent = await findRevision(trx, buildId, body.parent).catch(() => { throw notFound(body.parent!, 'parent') })
  else if (body.parent === undefined) parent = (await trx('revisions').where({ build_id: buildId }).orderBy('seq', 'desc').first()) ?? null
  const max: number | null = (await trx('revisions').where({ build_id: buildId }).max({ max: 'seq' }).first())?.max ?? null
  const parameters = await parametersToStore(trx, buildId, parent?.id ?? null, body.parameters)
  const [row] = await trx('revisions').insert({
    build_id: buildId,
    label: body.label,
    seq: (max ?? 0) + 1,
    parent_id: parent?.id ?? null,
    built_on: body.builtOn ?? null,
    summary: body.summary ?? '',
    changes: JSON.stringify(body.changes ?? []),
    parameters: JSON.stringify(parameters),
    created_by: createdBy,
  }).returning('*')
  return { ...revisionBrief(row!, parent?.label ?? null), changes: row!.changes, parameters: row!.parameters, frozenBy: null, readings: 0, targetsTested: 0, createdAt: new Date(row!.created_at).toISOString() }
}

/** Edits an open revision (the caller has locked it with findRevision(…, 'update')). */
export async function updateRevision(trx: Knex.Transaction, rev: RevisionRow, patch: z.output<typeof RevisionPatch>): Promise<void> {
  assertOpen(rev, 'edit it')
  const changes: Record<string, unknown> = { updated_at: trx.fn.now() }
  if (patch.summary !== undefined) changes.summary = patch.summary
  if (patch.changes !== undefined) changes.changes = JSON.stringify(patch.changes)
  if (patch.parameters !== undefined) changes.parameters = JSON.stringify(await parametersToStore(trx, rev.build_id, rev.id, patch.parameters))
  if (patch.builtOn !== undefined) changes.built_on = patch.builtOn
  await trx('revisions').where({ id: rev.id }).update(changes)
}

/** Signs a revision off: from now on it and its readings are read-only. */
export async function freezeRevision(trx: Db, rev: RevisionRow, userId: string | null): Promise<void> {
  if (rev.frozen_at) throw createError({ statusCode: 409, message: `Revision ${rev.label} is already frozen` })
  await trx('revisions').where({ id: rev.id }).update({ frozen_at: trx.fn.now(), frozen_by: userId, updated_at: trx.fn.now() })
  await recordEvent(trx, { buildId: rev.build_id, type: 'revision.frozen', revisionId: rev.id })
}

export async function unfreezeRevision(trx: Db, rev: RevisionRow): Promise<void> {
  if (!rev.frozen_at) throw createError({ statusCode: 409, message: `Revision ${rev.label} is not frozen` })
  await trx('revisions').where({ id: rev.id }).update({ frozen_at: null, frozen_by: null, updated_at: trx.fn.now() })
}

/** The build's revisions, oldest first, with their reading counts (one query). */
export async function listRevisions(db: Db, buildId: string, onlyId?: string): Promise<RevisionView[]> {
  return (await revisionsQuery(db, buildId, onlyId)).map(revisionViewOf)
}

export type RevisionListRow = RevisionRow & { parent_label: string | null, frozen_by_name: string | null, reading_count: number, targets_tested: number }

/** listRevisions' query, for reads that send it in a batch (prepared.ts); its rows map with revisionViewOf. */
export function revisionsQuery(db: Db, buildId: string, onlyId?: string) {
  const q = db('revisions as r')
    .leftJoin('revisions as p', 'p.id', 'r.parent_id')
    .leftJoin('users as f', 'f.id', 'r.frozen_by')
    .where('r.build_id', buildId)
    .orderBy('r.seq')
    .select('r.*', 'p.label as parent_label', 'f.name as frozen_by_name',
      db('readings').whereRaw('readings.revision_id = r.id').count('*').as('reading_count'),
      db('cell_stats').whereRaw('cell_stats.revision_id = r.id').count('*').as('targets_tested'))
  if (onlyId) q.where('r.id', onlyId)
  return q as unknown as Knex.QueryBuilder<RevisionListRow, RevisionListRow[]>
}

export function revisionViewOf(r: RevisionListRow): RevisionView {
  return {
    ...revisionBrief(r, r.parent_label),
    changes: r.changes,
    parameters: r.parameters,
    frozenBy: r.frozen_by_name,
    readings: Number(r.reading_count),
    targetsTested: Number(r.targets_tested),
    createdAt: new Date(r.created_at).toISOString(),
  }
}
