import { createError } from 'h3'
import type { Knex } from 'knex'
import type { z } from 'zod'
import type { ReadingCreated, ReadingDetail } from '#shared/types/api'
import { cellFromStats, cellInUnit, cellStatus } from '#shared/utils/cellStats'
import { isStatedBody, isTrackBody, type ReadingBody, type TrackReadingInput } from '#shared/utils/readingSchemas'
import { MAX_SAMPLES, StatsOverflowError, computeStats, statedStats } from '#shared/utils/readingStats'
import { TrackError, fitTrack } from '#shared/utils/track'
import { assertSameQuantity, diffFromSI, diffToSI, fromSI, parseUnit, quantityLabel, toSI, type UnitInfo } from '#shared/utils/units'
import type { ReadingRow, StoredTrack, TargetRow } from '../../db/tables'
import type { Actor } from '../audit'
import type { Db } from '../db'
import { assertOpen, findRevision } from './revisions'
import { cellOfRow, refreshCell, statsColumns } from './statsCache'
import { trackTargetEvents } from './targetEvents'
import { cellTargetOf, findTarget, unitProblem } from './targets'

// Readings: the samples (or one stated result, value ± u, or a track's fitted speed) of one target on one revision. Plain Knex with the connection passed
// in (the seed uses it too). Each write re-pools the cell and re-decides the target in the same
// transaction, holding the target's row lock, so the cached statistics never disagree.

/** Statistics that overflow double precision (the reading's, its cell's, a movement's) as a 422 naming the values (or a stated value). */
async function statsOr422<T>(work: () => Promise<T>, field = 'values'): Promise<T> {
  try {
    return await work()
  }
  catch (e) {
    if (!(e instanceof StatsOverflowError)) throw e
    throw createError({ statusCode: 422, message: `${field}: ${e.message}`, data: { fields: { [field]: 'Statistics overflow' } } })
  }
}

function tooLarge(field = 'values'): never {
  throw createError({ statusCode: 400, message: `${field}: The ${field === 'values' ? 'values are' : `${field} is`} too large to compute with in SI`, data: { fields: { [field]: 'Too large' } } })
}

/**
 * Records a reading and updates the cell's cached statistics. 404 for a target or revision not in
 * the build, 409 for a derived or archived target, a frozen revision or a cell that would pool more than
 * MAX_SAMPLES values, 422 for a unit of another quantity or statistics that overflow.
 */
export async function insertReading(trx: Knex.Transaction, actor: Pick<Actor, 'userId' | 'rigTokenId'>, input: { buildId: string, body: z.output<typeof ReadingBody> }): Promise<ReadingCreated> {
  return await statsOr422(() => recordReading(trx, actor, input), isTrackBody(input.body) ? 'track' : isStatedBody(input.body) ? 'value' : 'values')
}

function unitOf(text: string, field: string, quantity: 'length' | 'time', examples: string): UnitInfo {
  let unit
  try {
    unit = parseUnit(text)
  }
  catch (e) {
    throw unitProblem(e, field)
  }
  if (unit.quantity !== quantity) {
    const message = `"${text.trim()}" is a unit of ${quantityLabel(unit.quantity)}; ${field === 'track.unit' ? 'positions' : 'times'} are in a unit of ${quantity} (${examples})`
    throw createError({ statusCode: 422, message: `${field}: ${message}`, data: { fields: { [field]: message } } })
  }
  return unit
}

/**
 * A track as one result: the least-squares slope of x on t in the unit "length unit/time unit",
 * its standard error and n − 2 degrees of freedom (docs/computation.md §Track readings). 422 for
 * units that aren't a length and a time, or points all at one time.
 */
function trackResult(body: TrackReadingInput) {
  const length = unitOf(body.track.unit, 'track.unit', 'length', 'm, mm, in …')
  const time = unitOf(body.track.timeUnit, 'track.timeUnit', 'time', 's, ms, min …')
  const wrap = (u: string) => (/[/·^]/.test(u) ? `(${u})` : u)
  const speed = parseUnit(`${wrap(length.unit)}/${wrap(time.unit)}`)
  let fit
  try {
    fit = fitTrack(body.track.points)
  }
  catch (e) {
    if (!(e instanceof TrackError)) throw e
    throw createError({ statusCode: 422, message: `track.points: ${e.message}`, data: { fields: { 'track.points': e.message } } })
  }
  const stored: StoredTrack = {
    timeUnit: time.unit,
    unit: length.unit,
    points: body.track.points.map(p => (p.frame === undefined ? { t: p.t, x: p.x } : { t: p.t, x: p.x, frame: p.frame })),
    file: body.file ?? null,
  }
  return { unit: speed.unit, value: fit.slope, u: fit.u, dof: fit.nu, stored }
}

async function recordReading(trx: Knex.Transaction, actor: Pick<Actor, 'userId' | 'rigTokenId'>, input: { buildId: string, body: z.output<typeof ReadingBody> }): Promise<ReadingCreated> {
  const { buildId, body } = input
  const target = await findTarget(trx, buildId, body.target, true)
  const revision = await findRevision(trx, buildId, body.revision, 'share')
  if (target.formula !== null) {
    throw createError({
      statusCode: 409,
      message: `target: "${target.key}" is derived from a formula (${target.formula}) and takes no readings of its own; add readings of its inputs instead`,
      data: { fields: { target: 'Derived: takes no readings' } },
    })
  }
  if (target.archived_at) throw createError({ statusCode: 409, message: `Target "${target.key}" is archived; restore it to add readings` })
  assertOpen(revision, 'add readings')
  const track = isTrackBody(body) ? trackResult(body) : null
  let units
  try {
    units = assertSameQuantity(isTrackBody(body) ? track!.unit : body.unit, target.unit)
  }
  catch (e) {
    throw unitProblem(e, track ? 'target' : 'unit')
  }
  // the readings of a cell are pooled into one sample set, which holds at most MAX_SAMPLES values
  const held = (await trx('readings').where({ target_id: target.id, revision_id: revision.id }).sum({ n: 'n' }).first())?.n ?? 0
  // a track is stored as the stated result it gives
  const stated = track ?? (isStatedBody(body) ? { value: body.value, u: body.u, dof: body.dof ?? null } : null)
  const samples = isTrackBody(body) || isStatedBody(body) ? null : body
  const entered = stated ? [stated.value] : samples!.values
  if (Number(held) + entered.length > MAX_SAMPLES) {
    throw createError({
      statusCode: 409,
      message: `values: Revision ${revision.label} already holds ${Number(held).toLocaleString('en')} values of "${target.key}"; the readings of one target on one revision hold at most ${MAX_SAMPLES.toLocaleString('en')} values together`,
      data: { fields: { values: 'Too many values for this revision' } },
    })
  }
  const valueField = track ? 'track' : stated ? 'value' : 'values'
  const valuesSI = entered.map(v => toSI(v, units.entered))
  const resolution = samples?.resolution ?? null
  const resolutionSI = resolution ? diffToSI(resolution, units.entered) : null
  if (!valuesSI.every(Number.isFinite) || (resolutionSI !== null && !Number.isFinite(resolutionSI))) tooLarge(valueField)
  // a stated u is a difference: it converts with the unit's factor only (no offset)
  const uSI = stated ? diffToSI(stated.u, units.entered) : null
  if (uSI !== null && !Number.isFinite(uSI)) tooLarge(track ? 'track' : 'u')
  const stats = stated ? statedStats(valuesSI[0]!, uSI!, stated.dof) : computeStats(valuesSI, resolutionSI)
  if (![stats.mean, stats.sd ?? 0, stats.u ?? 0, ...(stats.ci95 ?? [])].every(Number.isFinite)) tooLarge(track ? 'track' : stated ? 'u' : 'values')
  const file = track?.stored.file ? await evidenceFile(trx, buildId, track.stored.file) : null

  const [row] = await trx('readings').insert({
    target_id: target.id,
    revision_id: revision.id,
    values_si: valuesSI,
    values_entered: entered,
    unit_entered: units.entered.unit,
    method: body.method ?? '',
    resolution_si: resolutionSI,
    resolution_entered: resolution,
    stated_u_si: uSI,
    stated_u_entered: stated ? stated.u : null,
    stated_dof: stated ? stated.dof : null,
    track: track ? track.stored : null,
    ...statsColumns(cellFromStats(stats)),
    taken_at: body.takenAt ?? trx.fn.now(),
    taken_by: actor.userId,
    rig_token_id: actor.rigTokenId,
    notes: body.notes ?? '',
  }).returning('id')
  // the footage becomes the reading's evidence, unless it already is another reading's
  if (file && file.reading_id === null) await trx('files').where({ id: file.id }).update({ reading_id: row!.id, revision_id: file.revision_id ?? revision.id })

  const rule = cellTargetOf(target)
  const cell = await trackTargetEvents(trx, target, () => refreshCell(trx, rule, revision.id))
  const display = units.target
  const own = cellFromStats(stats)
  return {
    reading: { id: row!.id, kind: track ? 'track' : stated ? 'stated' : 'samples', unit: display.unit, ...cellInUnit(own, display), status: cellStatus(own, rule) },
    pooled: cell && cell.readings > 1
      ? { ...cellInUnit(cellOfRow(cell), display), readings: cell.readings, status: cell.status }
      : null,
  }
}

/** The build's file a track was marked on; 422 when the build has none with that id. */
async function evidenceFile(trx: Knex.Transaction, buildId: string, id: string) {
  const file = await trx('files').where({ id, build_id: buildId }).forUpdate().first('id', 'reading_id', 'revision_id')
  if (!file) throw createError({ statusCode: 422, message: 'file: This build has no file with that id', data: { fields: { file: 'No such file in this build' } } })
  return file
}

/** Deletes a reading of the build; 404 when there is none, 409 when its revision is frozen. */
export async function deleteReading(trx: Knex.Transaction, input: { buildId: string, id: string }): Promise<{ target: TargetRow, revision: string, n: number }> {
  return await statsOr422(() => removeReading(trx, input))
}

async function removeReading(trx: Knex.Transaction, input: { buildId: string, id: string }): Promise<{ target: TargetRow, revision: string, n: number }> {
  const { buildId, id } = input
  const found = await trx('readings').join('targets', 'targets.id', 'readings.target_id')
    .where('readings.id', id).where('targets.build_id', buildId)
    .first('targets.key', 'readings.revision_id') as { key: string, revision_id: string } | undefined
  if (!found) throw createError({ statusCode: 404, message: 'Reading not found' })
  const target = await findTarget(trx, buildId, found.key, true)
  const revision = (await trx('revisions').where({ id: found.revision_id }).forShare().first())!
  assertOpen(revision, 'delete its readings')
  const [gone] = await trx('readings').where({ id }).delete().returning('n')
  if (!gone) throw createError({ statusCode: 404, message: 'Reading not found' })
  await trackTargetEvents(trx, target, () => refreshCell(trx, cellTargetOf(target), revision.id))
  return { target, revision: revision.label, n: gone.n }
}

/** A stored reading as the target and revision pages show it. */
export function readingDetail(r: ReadingRow & { revision_label: string, by_user: string | null, by_rig: string | null }, target: TargetRow): ReadingDetail {
  const unit = parseUnit(target.unit)
  const cell = cellOfRow(r)
  const rule = cellTargetOf(target)
  return {
    id: r.id,
    kind: r.track ? 'track' : r.stated_u_si === null ? 'samples' : 'stated',
    revision: r.revision_label,
    n: r.n,
    stats: cellInUnit(cell, unit),
    status: cellStatus(cell, rule),
    unitEntered: r.unit_entered,
    valuesEntered: r.values_entered,
    values: r.values_si.map(v => fromSI(v, unit)),
    method: r.method,
    resolutionEntered: r.resolution_entered,
    resolution: r.resolution_si === null ? null : diffFromSI(r.resolution_si, unit),
    uEntered: r.stated_u_entered,
    u: r.stated_u_si === null ? null : diffFromSI(r.stated_u_si, unit),
    dof: r.stated_dof,
    track: r.track,
    takenAt: new Date(r.taken_at).toISOString(),
    by: r.by_user ?? (r.by_rig ? `rig token ${r.by_rig}` : null),
    rig: r.rig_token_id !== null,
    notes: r.notes,
    createdAt: new Date(r.created_at).toISOString(),
  }
}

/** Readings with who took them, for the target and revision pages (one query). */
export function readingsQuery(db: Db) {
  return db('readings as rd')
    .join('revisions as rv', 'rv.id', 'rd.revision_id')
    .leftJoin('users as u', 'u.id', 'rd.taken_by')
    .leftJoin('rig_tokens as k', 'k.id', 'rd.rig_token_id')
    .orderBy([{ column: 'rv.seq' }, { column: 'rd.taken_at' }, { column: 'rd.created_at' }])
    .select('rd.*', 'rv.label as revision_label', 'u.name as by_user', 'k.name as by_rig')
}
