import { createError } from 'h3'
import type { z } from 'zod'
import type { ParameterView, SamplePlan, SolveResult, TargetDesign } from '#shared/types/api'
import { tidyNumber } from '#shared/utils/cellStats'
import { FormulaError } from '#shared/utils/derived'
import {
  calibrate, calibrationNu, checkModel, DesignError, effectiveParameters, parameterKeyOf, predict, ratioOf,
  samplesNeeded, sensitivityOf, solveFor, uniqueParameterKey, unusableReason, type DesignParameter, type EffectiveParameter, type Goal,
} from '#shared/utils/design'
import type { ParameterField, SolveBody } from '#shared/utils/revisionSchemas'
import { diffFromSI, fromSI, parseUnit } from '#shared/utils/units'
import type { RevisionRow, TargetRow } from '../../db/tables'
import type { Db } from '../db'
import { findRevision } from './revisions'
import { targetView, unitProblem } from './targets'

// Design math on the server: the revisions' effective parameters, a target's model checked
// against the build, predicted against measured per revision with the calibration factor and
// the sensitivities, the solver and the sample plan. The math is shared/utils/design.ts.

type ParamRevision = Pick<RevisionRow, 'id' | 'label' | 'seq' | 'parent_id' | 'parameters'>

/** Every revision of the build (oldest first) with its effective parameters. */
export async function revisionsWithParameters(db: Db, buildId: string): Promise<(ParamRevision & { effective: EffectiveParameter[] })[]> {
  const rows: ParamRevision[] = await db('revisions').where({ build_id: buildId }).orderBy('seq').select('id', 'label', 'seq', 'parent_id', 'parameters')
  return withEffectiveParameters(rows)
}

/** Revision rows (oldest first, with parent_id and parameters) with their effective parameters. */
export function withEffectiveParameters<R extends ParamRevision>(rows: R[]): (R & { effective: EffectiveParameter[] })[] {
  const byId = new Map(rows.map(r => [r.id, r]))
  return rows.map(r => ({ ...r, effective: effectiveParameters(chainOf(byId, r.id)) }))
}

/** The parameter lists from the oldest ancestor down to the revision `id`. */
function chainOf(byId: ReadonlyMap<string, Pick<RevisionRow, 'id' | 'parent_id' | 'parameters'>>, id: string | null): DesignParameter[][] {
  const chain: DesignParameter[][] = []
  const seen = new Set<string>()
  for (let at = id ? byId.get(id) : undefined; at && !seen.has(at.id); at = at.parent_id ? byId.get(at.parent_id) : undefined) {
    seen.add(at.id)
    chain.unshift(at.parameters.map(storedParameter))
  }
  return chain
}

/** A stored parameter (an older row may lack key or tolerance: the migration gave every row both). */
function storedParameter(p: RevisionRow['parameters'][number]): DesignParameter {
  return { key: p.key, name: p.name ?? p.key, value: p.value, unit: p.unit ?? null, tolerance: p.tolerance ?? null }
}

/** The effective parameters of one revision (its own over its ancestors'). */
export async function effectiveParametersOf(db: Db, rev: RevisionRow): Promise<(ParameterView & { inherited: boolean })[]> {
  const rows: ParamRevision[] = await db('revisions').where({ build_id: rev.build_id }).select('id', 'label', 'seq', 'parent_id', 'parameters')
  return effectiveParameters(chainOf(new Map(rows.map(r => [r.id, r])), rev.id))
}

function badParameter(index: number, field: string, message: string) {
  return createError({ statusCode: 400, message: `parameters.${index}.${field}: ${message}`, data: { fields: { [`parameters.${index}.${field}`]: message } } })
}

/**
 * Parameters as a request gives them, as stored. A keyed parameter's unit must be one Ratchet
 * reads (400 otherwise) and its key unique in the list. The older shape {name, value, unit}
 * keeps working: such a parameter takes the key of the parameter of that name on the revision or
 * its ancestors (`known`, name → key), or one made from its name; a unit Ratchet doesn't read is
 * kept as typed, and models can't use that parameter.
 */
export async function parametersToStore(db: Db, buildId: string, startAt: string | null, params: z.output<typeof ParameterField>[] | undefined): Promise<DesignParameter[]> {
  const list = params ?? []
  if (list.length === 0) return []
  const known = new Map<string, string>()
  if (startAt !== null && list.some(p => p.key === undefined)) {
    const rows = await db('revisions').where({ build_id: buildId }).select('id', 'parent_id', 'parameters')
    for (const own of chainOf(new Map(rows.map(r => [r.id, r])), startAt)) {
      for (const p of own) known.set(p.name.toLowerCase(), p.key)
    }
  }
  const taken = new Set(list.filter(p => p.key !== undefined).map(p => p.key!))
  const out: DesignParameter[] = []
  const seen = new Set<string>()
  list.forEach((p, i) => {
    let key = p.key
    let unit = p.unit ?? null
    if (key !== undefined) {
      if (seen.has(key)) throw badParameter(i, 'key', `The key "${key}" appears twice; each parameter has its own`)
      if (unit) {
        try {
          unit = parseUnit(unit).unit
        }
        catch (e) {
          const problem = unitProblem(e, `parameters.${i}.unit`)
          throw problem
        }
      }
    }
    else {
      const name = p.name!
      key = known.get(name.toLowerCase()) ?? parameterKeyOf(name)
      // a key given elsewhere in the list, or one already used here, is not taken twice
      if (seen.has(key) || taken.has(key)) key = uniqueParameterKey(parameterKeyOf(name), new Set([...seen, ...taken]))
      if (unit) {
        try {
          unit = parseUnit(unit).unit
        }
        catch { /* an older-shape unit Ratchet doesn't read (e.g. "teeth") is kept as typed */ }
      }
    }
    seen.add(key)
    out.push({ key, name: p.name ?? key, value: p.value, unit, tolerance: typeof p.value === 'number' ? p.tolerance ?? null : null })
  })
  return out
}

// ---------------------------------------------------------------------------------------
// Models

/** A model's problem as the answer: 400 for syntax, 422 otherwise. */
export function modelProblem(e: unknown) {
  if (e instanceof FormulaError) {
    return createError({ statusCode: e.code === 'syntax' ? 400 : 422, message: `model: ${e.message}`, data: { fields: { model: e.message }, code: e.code, keys: e.keys } })
  }
  if (e instanceof DesignError) {
    return createError({ statusCode: 422, message: `model: ${e.message}`, data: { fields: { model: e.message }, code: e.code } })
  }
  return e
}

/**
 * Checks a model for a target of the build against the parameters its revisions define (each
 * key as the latest revision setting it gives it). Returns the model as stored; 400/422 otherwise.
 */
export async function checkTargetModel(db: Db, buildId: string, targetUnit: string, model: string): Promise<string> {
  const rows: Pick<RevisionRow, 'parameters'>[] = await db('revisions').where({ build_id: buildId }).orderBy('seq').select('parameters')
  const defined: Record<string, DesignParameter> = {}
  for (const row of rows) {
    for (const p of row.parameters.map(storedParameter)) {
      // a numeric definition wins over a text one of the same key
      if (!defined[p.key] || unusableReason(p) === null || unusableReason(defined[p.key]!) !== null) defined[p.key] = p
    }
  }
  try {
    checkModel(model, defined, targetUnit)
  }
  catch (e) {
    throw modelProblem(e)
  }
  return model.trim()
}

// ---------------------------------------------------------------------------------------
// Predicted against measured

function goalOf(t: TargetRow): Goal {
  const unit = parseUnit(t.unit)
  return { comparator: t.comparator, threshold: fromSI(t.threshold, unit), thresholdHigh: t.threshold_high === null ? null : fromSI(t.threshold_high, unit) }
}

interface DesignState {
  rows: (ParamRevision & { effective: EffectiveParameter[] })[]
  revisions: TargetDesign['revisions']
  calibration: TargetDesign['calibration']
  /** the factor's effective degrees of freedom */
  calibrationNu: number
  sensitivityRevision: string | null
  sensitivity: TargetDesign['sensitivity']
}

async function designState(db: Db, t: TargetRow): Promise<DesignState> {
  const unit = parseUnit(t.unit)
  const [rows, cells] = await Promise.all([
    revisionsWithParameters(db, t.build_id),
    db('cell_stats').where({ target_id: t.id }).select('revision_id', 'mean', 'u', 'nu_eff') as Promise<{ revision_id: string, mean: number, u: number | null, nu_eff: number | null }[]>,
  ])
  const cellOf = new Map(cells.map(c => [c.revision_id, c]))
  const revisions: TargetDesign['revisions'] = []
  const parts: { ratio: number, measuredRel: number, measuredNu: number | null, predictedRel: number, u: number | null }[] = []
  const ratios: { value: number, u: number | null }[] = []
  const calibrated: string[] = []
  let latest: { label: string, prediction: ReturnType<typeof predict> } | null = null
  for (const r of rows) {
    const cell = cellOf.get(r.id)
    const measured = cell ? { mean: tidyNumber(fromSI(cell.mean, unit)), u: cell.u === null ? null : tidyNumber(diffFromSI(cell.u, unit)) } : null
    let predicted: { value: number, u: number } | null = null
    let cantPredict: string | null = null
    if (t.model === null) {
      cantPredict = 'The target has no model'
    }
    else {
      try {
        const p = predict(t.model, r.effective, t.unit)
        predicted = { value: tidyNumber(p.value), u: tidyNumber(p.u) }
        latest = { label: r.label, prediction: p }
      }
      catch (e) {
        if (!(e instanceof DesignError || e instanceof FormulaError)) throw e
        cantPredict = e.message
      }
    }
    const ratio = measured && predicted ? ratioOf(measured, predicted) : null
    if (ratio && measured && predicted) {
      ratios.push(ratio)
      calibrated.push(r.label)
      parts.push({
        ratio: ratio.value,
        measuredRel: measured.u === null || measured.mean === 0 ? 0 : measured.u / measured.mean,
        measuredNu: cell!.nu_eff,
        predictedRel: predicted.u / predicted.value,
        u: ratio.u,
      })
    }
    revisions.push({ revision: r.label, predicted, measured, ratio: ratio ? { value: tidyNumber(ratio.value), u: ratio.u === null ? null : tidyNumber(ratio.u) } : null, cantPredict })
  }
  const cal = calibrate(ratios)
  const nu = cal ? calibrationNu(parts, cal) : Infinity
  return {
    rows,
    revisions,
    calibration: cal ? { factor: tidyNumber(cal.factor), u: cal.u === null ? null : tidyNumber(cal.u), nu: Number.isFinite(nu) ? tidyNumber(nu) : null, revisions: calibrated, method: cal.method } : null,
    calibrationNu: nu,
    sensitivityRevision: latest?.label ?? null,
    sensitivity: latest ? sensitivityOf(latest.prediction).map(s => ({ parameter: s.parameter, elasticity: s.elasticity === null ? null : tidyNumber(s.elasticity), share: tidyNumber(s.share) })) : [],
  }
}

/** GET …/targets/:key/design: predicted against measured on every revision, the calibration factor and the sensitivities. */
export async function targetDesign(db: Db, target: TargetRow): Promise<TargetDesign> {
  const state = await designState(db, target)
  return {
    target: targetView(target),
    model: target.model,
    revisions: state.revisions,
    calibration: state.calibration,
    sensitivityRevision: state.sensitivityRevision,
    sensitivity: state.sensitivity,
  }
}

function designProblem(e: unknown) {
  if (e instanceof DesignError || e instanceof FormulaError) {
    return createError({ statusCode: 422, message: e.message, data: { code: e.code } })
  }
  return e
}

/**
 * POST …/targets/:key/solve: the value of one parameter at which the calibrated prediction
 * (calibration factor × model, 1 without a calibration) meets the threshold; 422 with the
 * reason when there is none within 1/1000× to 1000× of its current value.
 */
export async function solveTarget(db: Db, input: { target: TargetRow, body: z.output<typeof SolveBody> }): Promise<SolveResult> {
  const { target: t, body } = input
  if (t.model === null) throw createError({ statusCode: 422, message: `Target "${t.key}" has no model to solve; give it one first` })
  const state = await designState(db, t)
  const rev = body.revision ? await findRevision(db, t.build_id, body.revision) : null
  const row = rev ? state.rows.find(r => r.id === rev.id)! : state.rows.at(-1)
  if (!row) throw createError({ statusCode: 422, message: 'The build has no revision whose parameters to start from' })
  const margin = body.margin ?? 'none'
  const cal = state.calibration
  try {
    const solved = solveFor({
      model: t.model,
      parameters: row.effective,
      parameter: body.parameter,
      targetUnit: t.unit,
      goal: goalOf(t),
      factor: { value: cal?.factor ?? 1, u: cal?.u ?? 0, nu: state.calibrationNu },
      margin,
    })
    const p = row.effective.find(x => x.key === body.parameter)!
    return {
      parameter: body.parameter,
      value: tidyNumber(solved.value),
      unit: p.unit,
      factor: cal?.factor ?? 1,
      calibrated: cal !== null,
      revision: row.label,
      margin,
      predicted: tidyNumber(solved.predicted),
      u: tidyNumber(solved.u),
      goal: tidyNumber(goalOfValue(goalOf(t))),
    }
  }
  catch (e) {
    throw designProblem(e)
  }
}

const goalOfValue = (g: Goal) => (g.comparator === 'between' ? (g.threshold + g.thresholdHigh!) / 2 : g.threshold)

/** GET …/targets/:key/plan?revision=…: how many samples tell Met from Short on that revision. */
export async function planTarget(db: Db, input: { target: TargetRow, revision: RevisionRow }): Promise<SamplePlan> {
  const { target: t, revision } = input
  if (t.formula !== null) return { samplesNeeded: null, reason: 'A derived target takes no readings of its own', revision: revision.label }
  const cell = await db('cell_stats').where({ target_id: t.id, revision_id: revision.id }).first('mean', 'sd', 'u_b', 'n')
  if (!cell) return { samplesNeeded: null, reason: `No reading of this target on ${revision.label} yet`, revision: revision.label }
  const unit = parseUnit(t.unit)
  const plan = samplesNeeded({
    mean: fromSI(cell.mean, unit),
    sd: cell.sd === null ? null : diffFromSI(cell.sd, unit),
    uB: cell.u_b === null ? null : diffFromSI(cell.u_b, unit),
    goal: goalOf(t),
  })
  return { ...plan, revision: revision.label }
}
