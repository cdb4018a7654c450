import { createError } from 'h3'
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { TargetView } from '#shared/types/api'
import { hazardOf } from '#shared/utils/caution'
import { tidyNumber } from '#shared/utils/cellStats'
import { targetRuleProblems, type TargetBody, type TargetPatch } from '#shared/utils/targetSchemas'
import { UnitError, quantityLabel, assertSameQuantity, diffFromSI, diffToSI, fromSI, parseUnit, toSI, type UnitInfo } from '#shared/utils/units'
import type { TargetRow } from '../../db/tables'
import type { Actor } from '../audit'
import type { Db } from '../db'
import { checkTargetModel } from './design'
import { checkTargetFormula } from './formulas'
import { redecideTarget, type CellTarget } from './statsCache'
import { trackTargetEvents } from './targetEvents'

// Targets of a build. Plain Knex with the connection passed in (the seed uses it too).
// Thresholds arrive in the display unit and are stored in SI.

const TARGET_KEY = /^[a-z][a-z0-9_]{0,59}$/

/** SI values of a definition must stay finite (1e308 kWh would not). */
function finiteOr400(values: Record<string, number | null>) {
  const bad = Object.entries(values).filter(([, v]) => v !== null && !Number.isFinite(v)).map(([k]) => k)
  if (bad.length > 0) {
    throw createError({ statusCode: 400, message: `${bad[0]}: The value is too large to compute with in SI`, data: { fields: Object.fromEntries(bad.map(k => [k, 'Too large'])) } })
  }
}

/** A unit the caller typed; an unknown one is a 422 saying so. */
export function unitOr422(text: string, field = 'unit'): UnitInfo {
  try {
    return parseUnit(text)
  }
  catch (e) {
    throw unitProblem(e, field)
  }
}

/** A UnitError as a 400 for text that is no unit, a 422 for a unit of another quantity (other errors pass through). */
export function unitProblem(e: unknown, field = 'unit') {
  if (!(e instanceof UnitError)) return e
  const message = e.code === 'unknown' ? `${e.message}. A unit is an expression such as N/mm, km/h, kΩ or W/(m·K)` : e.message
  return createError({ statusCode: e.code === 'unknown' ? 400 : 422, message: `${field}: ${message}`, data: { fields: { [field]: message } } })
}

export function cellTargetOf(t: TargetRow): CellTarget {
  return { id: t.id, buildId: t.build_id, comparator: t.comparator, threshold: t.threshold, thresholdHigh: t.threshold_high, noiseBand: t.noise_band }
}

const orNull = (x: number | null, f: (v: number) => number) => (x === null ? null : tidyNumber(f(x)))

/** The target's definition in its display unit. */
export function targetView(t: TargetRow): TargetView {
  const unit = parseUnit(t.unit)
  const hazard = hazardOf(t.quantity)
  return {
    id: t.id,
    key: t.key,
    name: t.name,
    unit: t.unit,
    quantity: t.quantity,
    quantityLabel: quantityLabel(t.quantity),
    comparator: t.comparator,
    threshold: tidyNumber(fromSI(t.threshold, unit)),
    thresholdHigh: orNull(t.threshold_high, v => fromSI(v, unit)),
    stretch: orNull(t.stretch, v => fromSI(v, unit)),
    noiseBand: orNull(t.noise_band, v => diffFromSI(v, unit)),
    notes: t.notes,
    position: t.position,
    archived: t.archived_at !== null,
    caution: hazard !== null,
    hazard,
    derived: t.formula !== null,
    formula: t.formula,
    model: t.model,
  }
}

/** A target of the build by its key; 404 otherwise. `lock` takes the row for the transaction. */
export async function findTarget(db: Db, buildId: string, key: string, lock = false): Promise<TargetRow> {
  const wanted = String(key).trim()
  // a key that can't exist is not looked up (nor is text PostgreSQL would refuse)
  const q = db('targets').where({ build_id: buildId, key: wanted }).first()
  const row = isTargetKey(wanted) ? await (lock ? q.forUpdate() : q) : undefined
  if (!row) throw targetNotFound(key)
  return row
}

/** Whether `key` can be a target's key (one that can't is not looked up). */
export const isTargetKey = (key: string) => TARGET_KEY.test(key)

export function targetNotFound(key: string) {
  return createError({ statusCode: 404, message: `Target "${key}" not found in this build`, data: { fields: { target: 'Not found in this build' } } })
}

function duplicateKey(key: string) {
  return createError({ statusCode: 409, message: `key: A target with the key "${key}" exists in this build; choose another`, data: { fields: { key: 'Taken' } } })
}

const isUniqueViolation = (e: unknown) => (e as { code?: string })?.code === '23505'

export async function insertTarget(trx: Knex.Transaction, actor: Pick<Actor, 'userId'>, input: { buildId: string, body: z.output<typeof TargetBody> }): Promise<TargetRow> {
  const { buildId, body } = input
  const unit = unitOr422(body.unit)
  // serialises target creation in the build (the key check and the position)
  await trx('builds').where({ id: buildId }).forUpdate().first('id')
  if (await trx('targets').where({ build_id: buildId, key: body.key }).first('id')) throw duplicateKey(body.key)
  const max: number | null = (await trx('targets').where({ build_id: buildId }).max({ max: 'position' }).first())?.max ?? null
  const si = {
    threshold: toSI(body.threshold, unit),
    thresholdHigh: body.comparator === 'between' ? toSI(body.thresholdHigh!, unit) : null,
    stretch: body.stretch == null ? null : toSI(body.stretch, unit),
    noiseBand: body.noiseBand == null ? null : diffToSI(body.noiseBand, unit),
  }
  finiteOr400(si)
  const formula = body.formula ? await checkTargetFormula(trx, buildId, { key: body.key, unit: unit.unit }, body.formula) : null
  const model = body.model ? await checkTargetModel(trx, buildId, unit.unit, body.model) : null
  try {
    const [row] = await trx('targets').insert({
      build_id: buildId,
      key: body.key,
      name: body.name,
      unit: unit.unit,
      quantity: unit.quantity,
      comparator: body.comparator,
      threshold: si.threshold,
      threshold_high: si.thresholdHigh,
      stretch: si.stretch,
      noise_band: si.noiseBand,
      notes: body.notes ?? '',
      formula,
      model,
      position: (max ?? -1) + 1,
      created_by: actor.userId,
    }).returning('*')
    return row!
  }
  catch (e) {
    if (isUniqueViolation(e)) throw duplicateKey(body.key)
    throw e
  }
}

/**
 * Edits a target (the caller has locked its row). A new display unit must measure the same
 * quantity; thresholds given in the same call are read in the new unit. When the rule changes,
 * the cached statuses and movements are decided again in the same transaction.
 */
export async function updateTarget(trx: Knex.Transaction, input: { target: TargetRow, patch: z.output<typeof TargetPatch> }): Promise<TargetRow> {
  const { target: t, patch } = input
  let unit = parseUnit(t.unit)
  if (patch.unit !== undefined) {
    try {
      unit = assertSameQuantity(patch.unit, t.unit).entered
    }
    catch (e) {
      throw unitProblem(e)
    }
  }
  const comparator = patch.comparator ?? t.comparator
  const shown = (v: number | null) => (v === null ? null : tidyNumber(fromSI(v, unit)))
  const thresholdHigh = patch.thresholdHigh !== undefined ? patch.thresholdHigh : comparator === 'between' ? shown(t.threshold_high) : null
  const merged = {
    comparator,
    threshold: patch.threshold ?? shown(t.threshold)!,
    thresholdHigh,
    stretch: patch.stretch !== undefined ? patch.stretch : shown(t.stretch),
  }
  const problems = targetRuleProblems(merged)
  const [field, message] = Object.entries(problems)[0] ?? []
  if (field) throw createError({ statusCode: 400, message: `${field}: ${message}`, data: { fields: problems } })

  const changes: Record<string, unknown> = { updated_at: trx.fn.now() }
  if (patch.name !== undefined) changes.name = patch.name
  if (patch.notes !== undefined) changes.notes = patch.notes
  if (patch.unit !== undefined) changes.unit = unit.unit
  if (patch.comparator !== undefined) changes.comparator = comparator
  if (patch.threshold !== undefined) changes.threshold = toSI(patch.threshold, unit)
  if (patch.thresholdHigh !== undefined || comparator !== 'between') {
    changes.threshold_high = thresholdHigh === null ? null : patch.thresholdHigh !== undefined ? toSI(thresholdHigh, unit) : t.threshold_high
  }
  if (patch.stretch !== undefined) changes.stretch = patch.stretch === null ? null : toSI(patch.stretch, unit)
  if (patch.noiseBand !== undefined) changes.noise_band = patch.noiseBand === null ? null : diffToSI(patch.noiseBand, unit)
  finiteOr400(Object.fromEntries(['threshold', 'threshold_high', 'stretch', 'noise_band']
    .filter(k => typeof changes[k] === 'number').map(k => [k, changes[k] as number])))
  if (patch.formula !== undefined && patch.formula !== t.formula) {
    if (patch.formula !== null) {
      const held = await trx('readings').where({ target_id: t.id }).first('id')
      if (held) {
        throw createError({
          statusCode: 409,
          message: `formula: Target "${t.key}" has readings of its own; a derived target takes none. Add a new target for the formula, or delete these readings first`,
          data: { fields: { formula: 'The target has readings' } },
        })
      }
      changes.formula = await checkTargetFormula(trx, t.build_id, { key: t.key, unit: unit.unit }, patch.formula)
    }
    else {
      changes.formula = null
    }
  }
  if (patch.model !== undefined && patch.model !== t.model) {
    changes.model = patch.model === null ? null : await checkTargetModel(trx, t.build_id, unit.unit, patch.model)
  }
  if (patch.archived === true && !t.archived_at) changes.archived_at = trx.fn.now()
  if (patch.archived === false && t.archived_at) {
    changes.archived_at = null
    const max: number | null = (await trx('targets').where({ build_id: t.build_id }).whereNull('archived_at').max({ max: 'position' }).first())?.max ?? null
    changes.position = (max ?? -1) + 1
  }
  const ruleChanged = ['comparator', 'threshold', 'threshold_high', 'noise_band'].some(k => k in changes)
  // a derived target's state is evaluated, not cached: take it before the row changes
  const derived = (t.formula !== null || typeof changes.formula === 'string') && (ruleChanged || 'formula' in changes)
  const write = async () => (await trx('targets').where({ id: t.id }).update(changes).returning('*'))[0]!
  if (derived) return await trackTargetEvents(trx, t, write, { own: false, derived: 'self' })
  const row = await write()
  // a measured target's cells are decided again under the new rule (the cells' statistics stay)
  if (ruleChanged) await trackTargetEvents(trx, row, () => redecideTarget(trx, cellTargetOf(row)), { derived: 'none' })
  return row
}

/** Puts the build's active targets in the order of `keys`, which must list each of them once. */
export async function reorderTargets(trx: Knex.Transaction, input: { buildId: string, keys: string[] }): Promise<void> {
  const { buildId, keys } = input
  await trx('builds').where({ id: buildId }).forUpdate().first('id')
  const active: string[] = await trx('targets').where({ build_id: buildId }).whereNull('archived_at').pluck('key')
  const given = new Set(keys)
  const missing = active.filter(k => !given.has(k))
  const unknown = keys.filter(k => !active.includes(k))
  if (given.size !== keys.length || missing.length > 0 || unknown.length > 0) {
    const parts = [
      given.size !== keys.length ? 'a key appears twice' : '',
      missing.length ? `missing: ${missing.join(', ')}` : '',
      unknown.length ? `not active targets of this build: ${unknown.join(', ')}` : '',
    ].filter(Boolean)
    throw createError({ statusCode: 400, message: `keys: List every active target of the build once (${parts.join('; ')})`, data: { fields: { keys: parts.join('; ') } } })
  }
  await trx.raw(`
    UPDATE targets AS t SET position = x.ord - 1, updated_at = now()
    FROM unnest(?::text[]) WITH ORDINALITY AS x(key, ord)
    WHERE t.build_id = ? AND t.key = x.key`, [keys, buildId])
}
