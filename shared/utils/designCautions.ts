// Cautions with numbers: where a target and the build's design parameters together say how
// much can hurt (a projectile's kinetic energy, a spinning part's rim speed, the loads' peak
// current against the pack's limit), the caution states that number. Which parameter plays which
// part is read from its quantity and its key or name (Ratchet's rule, docs/computation.md
// §Cautions). Kept apart from caution.ts, which the pages use without the unit tables.

import { currentCaution, projectileCaution, rimSpeedCaution, type NumberedCaution } from './caution'
import type { Comparator } from './conformance'
import { parseUnit, toSI, type Quantity } from './units'

export interface CautionParameter {
  key: string
  name: string
  value: number | string
  unit: string | null
}

export interface CautionTarget {
  quantity: Quantity
  /** the display unit the numbers below are in */
  unit: string
  comparator: Comparator
  threshold: number
  thresholdHigh: number | null
  stretch: number | null
  model: string | null
  /** the keys the model uses (empty without one) */
  modelKeys: readonly string[]
}

export interface CautionInput {
  target: CautionTarget
  /** the latest revision's effective parameters */
  parameters: readonly CautionParameter[]
  /** the latest pooled mean and its revision, in the display unit */
  measured: { value: number, revision: string } | null
  /** the model's (uncalibrated) prediction on the latest revision, in the display unit */
  predicted: { value: number, revision: string } | null
}

export interface DesignCaution extends NumberedCaution {
  /** what the number was worked out from, for the reader to check */
  basis: string
}

/** Words that make a mass a projectile's, a length a spinning part's radius, a current a pack's limit. */
const PROJECTILE = /\b(ball|projectile|shot|dart|puck|pellet|arrow|disc|disk)s?\b/i
const RADIUS = /\bradius\b/i
const DIAMETER = /\bdiameter\b/i
const PACK_LIMIT = /\b(pack|battery|fuse|bms|protection)\b/i

/** "wheel_radius" and "Wheel radius" both read as words. */
const words = (p: CautionParameter) => `${p.key.replace(/_/g, ' ')} ${p.name}`

interface Numeric { p: CautionParameter, quantity: Quantity, si: number }

function numeric(parameters: readonly CautionParameter[]): Numeric[] {
  const out: Numeric[] = []
  for (const p of parameters) {
    if (typeof p.value !== 'number' || !Number.isFinite(p.value)) continue
    try {
      const unit = parseUnit(p.unit ?? '')
      out.push({ p, quantity: unit.quantity, si: toSI(p.value, unit) })
    }
    catch { /* a unit Ratchet doesn't read plays no part */ }
  }
  return out
}

const shown = (x: number) => Number(x.toPrecision(4)).toLocaleString('en', { maximumSignificantDigits: 4 })
const paramText = (n: Numeric) => `${n.p.key} = ${shown(n.p.value as number)}${n.p.unit ? ` ${n.p.unit}` : ''}`

/**
 * The highest number the target reaches or aims at, in its display unit, and where it comes
 * from: the latest mean, the model's prediction, and for an at-least target its threshold and
 * stretch goal (a between target: its upper threshold). An at-most target's threshold is a cap,
 * not what the build does: it counts only when there is nothing else.
 */
function topValue(input: CautionInput): { value: number, basis: string } | null {
  const t = input.target
  const candidates: { value: number, basis: string }[] = []
  if (input.measured) candidates.push({ value: input.measured.value, basis: `measured on ${input.measured.revision}` })
  if (input.predicted) candidates.push({ value: input.predicted.value, basis: `the model’s prediction on ${input.predicted.revision}` })
  if (t.comparator === 'atLeast') {
    candidates.push({ value: t.threshold, basis: 'the threshold' })
    if (t.stretch !== null) candidates.push({ value: t.stretch, basis: 'the stretch goal' })
  }
  if (t.comparator === 'between' && t.thresholdHigh !== null) candidates.push({ value: t.thresholdHigh, basis: 'the upper threshold' })
  if (candidates.length === 0 && t.comparator === 'atMost') candidates.push({ value: t.threshold, basis: 'the threshold (no reading yet)' })
  const finite = candidates.filter(c => Number.isFinite(c.value))
  if (finite.length === 0) return null
  return finite.reduce((a, b) => (Math.abs(b.value) > Math.abs(a.value) ? b : a))
}

/** The largest (or, for limits, the smallest) of the parameters that fit. */
const largest = (list: Numeric[]) => list.reduce<Numeric | null>((a, b) => (a === null || Math.abs(b.si) > Math.abs(a.si) ? b : a), null)
const smallest = (list: Numeric[]) => list.reduce<Numeric | null>((a, b) => (a === null || Math.abs(b.si) < Math.abs(a.si) ? b : a), null)

/** A spinning part's radius in m from a radius (or a diameter, halved) parameter. */
function radiusOf(n: Numeric): number {
  return RADIUS.test(words(n.p)) ? n.si : n.si / 2
}

/**
 * The numbered cautions of one target: each names its number and what it was worked out from.
 * - A speed with a projectile's mass among the parameters: K = ½mv² at the highest speed.
 * - An angular speed with a radius (or diameter) parameter: the rim speed v = ωr at the highest
 *   angular speed; a model that multiplies an angular-speed parameter by a radius parameter: the
 *   rim speed at those parameters.
 * - A current with a pack, battery or fuse limit among the parameters: the highest current
 *   against the smallest such limit.
 */
export function designCautions(input: CautionInput): DesignCaution[] {
  const t = input.target
  const params = numeric(input.parameters)
  const out: DesignCaution[] = []
  let targetUnit
  try {
    targetUnit = parseUnit(t.unit)
  }
  catch {
    return out
  }
  const top = topValue(input)
  const topSI = top ? toSI(top.value, targetUnit) : null
  const topText = top ? `${shown(top.value)} ${t.unit} (${top.basis})` : ''

  if (t.quantity === 'velocity' && top && topSI !== null) {
    const mass = largest(params.filter(n => n.quantity === 'mass' && PROJECTILE.test(words(n.p))))
    const c = mass ? projectileCaution(mass.si, topSI) : null
    if (c && mass) out.push({ ...c, basis: `From ${paramText(mass)} and ${topText}; K = ½mv².` })
  }

  const radii = params.filter(n => n.quantity === 'length' && (RADIUS.test(words(n.p)) || DIAMETER.test(words(n.p))))
  if (t.quantity === 'angularSpeed' && top && topSI !== null) {
    const r = largest(radii)
    const c = r ? rimSpeedCaution(topSI, radiusOf(r)) : null
    if (c && r) out.push({ ...c, basis: `From ${paramText(r)} and ${topText}; v = ωr.` })
  }
  else if (t.modelKeys.length > 0) {
    const inModel = (n: Numeric) => t.modelKeys.includes(n.p.key)
    const omega = largest(params.filter(n => n.quantity === 'angularSpeed' && inModel(n)))
    const r = largest(radii.filter(inModel))
    const c = omega && r ? rimSpeedCaution(omega.si, radiusOf(r)) : null
    if (c && omega && r) out.push({ ...c, basis: `From ${paramText(omega)} and ${paramText(r)} in the model; v = ωr.` })
  }

  if (t.quantity === 'current' && top && topSI !== null) {
    const limit = smallest(params.filter(n => n.quantity === 'current' && PACK_LIMIT.test(words(n.p))))
    const c = limit ? currentCaution(Math.abs(topSI), limit.si) : null
    if (c && limit) out.push({ ...c, basis: `From ${topText} and ${paramText(limit)}.` })
  }
  return out
}
