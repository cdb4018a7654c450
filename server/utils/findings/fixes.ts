import { createError } from 'h3'
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { FixView, MyFix } from '#shared/types/findings'
import { fixRuleProblems, type FixBody, type FixPatch } from '#shared/utils/findingSchemas'
import { FIX_STATE_LABELS, OPEN_FIX_STATES } from '#shared/utils/lanes'
import type { FindingRow } from '../../db/tables'
import type { Actor } from '../audit'
import type { Db } from '../db'
import { fixView, fixesQuery, type FixJoinedRow } from './board'
import { recordFindingEvent } from './edit'

// Fixes of a finding: who owns them, when they are due, and the revision they landed in.
// Every change to a fix is a write to its finding (its version goes up, its history says so).

async function ownerOf(db: Db, buildId: string, ownerId: string | null | undefined): Promise<{ id: string, name: string } | null> {
  if (!ownerId) return null
  const row = await db('memberships as m').join('builds as b', 'b.team_id', 'm.team_id').join('users as u', 'u.id', 'm.user_id')
    .where({ 'b.id': buildId, 'm.user_id': ownerId }).first('u.id', 'u.name')
  if (!row) throw createError({ statusCode: 422, message: 'ownerId: The owner must be a member of this build’s team', data: { fields: { ownerId: 'Not a member of this team' } } })
  return row
}

async function landedRevision(db: Db, buildId: string, label: string | null | undefined): Promise<{ id: string, label: string } | null> {
  if (!label) return null
  const row = await db('revisions').where({ build_id: buildId }).whereRaw('lower(label) = lower(?)', [label]).first('id', 'label')
  if (!row) throw createError({ statusCode: 404, message: `landedIn: Revision "${label}" not found in this build`, data: { fields: { landedIn: 'Not found in this build' } } })
  return row
}

function ruleOr400(f: { state?: string, landedIn?: string | null }) {
  const problems = fixRuleProblems(f)
  const [field, message] = Object.entries(problems)[0] ?? []
  if (field) throw createError({ statusCode: 400, message: `${field}: ${message}`, data: { fields: problems } })
}

async function fixById(db: Db, id: string): Promise<FixView> {
  const row = await fixesQuery(db).where('x.id', id).first() as FixJoinedRow
  return fixView(row)
}

async function touch(trx: Knex.Transaction, findingId: string) {
  await trx('findings').where({ id: findingId }).update({ version: trx.raw('version + 1'), updated_at: trx.fn.now() })
}

export async function addFix(trx: Knex.Transaction, actor: Actor, input: { finding: FindingRow, body: z.output<typeof FixBody> }): Promise<FixView> {
  const { finding: f, body } = input
  const owner = await ownerOf(trx, f.build_id, body.ownerId)
  const landed = await landedRevision(trx, f.build_id, body.landedIn)
  const [row] = await trx('fixes').insert({
    finding_id: f.id,
    description: body.description,
    owner_id: owner?.id ?? null,
    due_on: body.dueOn ?? null,
    state: body.state,
    landed_revision_id: landed?.id ?? null,
    created_by: actor.userId,
  }).returning('id')
  await touch(trx, f.id)
  await recordFindingEvent(trx, f.id, 'fix-added', actor, {
    fix: row!.id,
    description: body.description,
    state: body.state,
    owner: owner?.name ?? null,
    dueOn: body.dueOn ?? null,
    landedIn: landed?.label ?? null,
  })
  return await fixById(trx, row!.id)
}

export async function editFix(trx: Knex.Transaction, actor: Actor, input: { finding: FindingRow, fixId: string, patch: z.output<typeof FixPatch> }): Promise<FixView> {
  const { finding: f, fixId, patch } = input
  const before = await fixesQuery(trx).where('x.id', fixId).where('x.finding_id', f.id).first() as FixJoinedRow | undefined
  if (!before) throw createError({ statusCode: 404, message: 'Fix not found on this finding' })
  // a fix that leaves the landed state forgets its revision unless it is given again
  const state = patch.state ?? before.state
  const landedIn = patch.landedIn !== undefined ? patch.landedIn : (state === 'landed' ? before.landed_label : null)
  ruleOr400({ state, landedIn })
  const changes: Record<string, unknown> = {}
  const detail: Record<string, { from: unknown, to: unknown }> = {}
  if (patch.description !== undefined && patch.description !== before.description) {
    changes.description = patch.description
    detail.description = { from: before.description, to: patch.description }
  }
  if (patch.ownerId !== undefined && patch.ownerId !== before.owner_id) {
    const owner = await ownerOf(trx, f.build_id, patch.ownerId)
    changes.owner_id = owner?.id ?? null
    detail.owner = { from: before.owner_name, to: owner?.name ?? null }
  }
  if (patch.dueOn !== undefined && patch.dueOn !== before.due_on) {
    changes.due_on = patch.dueOn
    detail.dueOn = { from: before.due_on, to: patch.dueOn }
  }
  if (state !== before.state) {
    changes.state = state
    detail.state = { from: FIX_STATE_LABELS[before.state], to: FIX_STATE_LABELS[state] }
  }
  const landed = await landedRevision(trx, f.build_id, landedIn)
  if ((landed?.label ?? null) !== before.landed_label) {
    changes.landed_revision_id = landed?.id ?? null
    detail.landedIn = { from: before.landed_label, to: landed?.label ?? null }
  }
  if (Object.keys(changes).length) {
    await trx('fixes').where({ id: fixId }).update({ ...changes, updated_at: trx.fn.now() })
    await touch(trx, f.id)
    await recordFindingEvent(trx, f.id, 'fix-edited', actor, { fix: fixId, description: patch.description ?? before.description, changes: detail })
  }
  return await fixById(trx, fixId)
}

/** The person's open fixes in builds they can still see, soonest due first (undated last). */
export async function myOpenFixes(db: Db, userId: string): Promise<MyFix[]> {
  const rows = await db('fixes as x')
    .join('findings as f', 'f.id', 'x.finding_id')
    .join('builds as b', 'b.id', 'f.build_id')
    .join('memberships as m', function () { this.on('m.team_id', 'b.team_id').andOnVal('m.user_id', userId) })
    .where('x.owner_id', userId)
    .whereIn('x.state', OPEN_FIX_STATES)
    .whereNull('b.archived_at')
    .orderByRaw('x.due_on ASC NULLS LAST, x.created_at ASC')
    .select('x.id', 'x.description', 'x.state', db.raw(`to_char(x.due_on, 'YYYY-MM-DD') AS due_on`),
      'f.id as finding_id', 'f.title', 'f.severity', 'f.lane', 'b.slug', 'b.name')
  return rows.map((r: Record<string, string>) => ({
    id: r.id!,
    description: r.description!,
    state: r.state as MyFix['state'],
    dueOn: r.due_on ?? null,
    finding: { id: r.finding_id!, title: r.title!, severity: r.severity as MyFix['finding']['severity'], lane: r.lane as MyFix['finding']['lane'] },
    build: { slug: r.slug!, name: r.name! },
  }))
}
