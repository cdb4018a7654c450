// One cell of the readings matrix: every reading of one target on one revision, pooled, with
// the cell's status against the target and its movement from the previous revision that has a
// reading of the same target. Everything here works in SI; `cellInUnit` converts for display.
// The server keeps these cells in a cache table; the seed and the benchmark use the same code.

import { movementOf, statusOf, type Comparator, type Movement, type MovementResult, type TargetStatus } from './conformance'
import { combineResults, pooledStats, type ReadingStats, type ResultEstimate } from './readingStats'
import { diffFromSI, fromSI, type UnitInfo } from './units'

/** A target's rule with every number in SI. */
export interface SiRule {
  comparator: Comparator
  threshold: number
  thresholdHigh: number | null
  noiseBand: number | null
}

export interface CellStats {
  /** how many readings were pooled */
  readings: number
  n: number
  mean: number
  sd: number | null
  uA: number | null
  uB: number | null
  u: number | null
  /** Infinity when only Type B remains */
  nuEff: number | null
  ciLow: number | null
  ciHigh: number | null
  /** how many of the readings are stated results (value ± u); 0 or absent: samples only */
  stated?: number
}

export interface CellDecision {
  status: Exclude<TargetStatus, 'untested'>
  /** null on the first revision with a reading of the target: nothing to compare with */
  delta: number | null
  p: number | null
  movement: Movement | null
  real: boolean | null
  reason: MovementResult['reason'] | null
}

export function cellFromStats(s: ReadingStats, readings = 1): CellStats {
  return {
    readings,
    n: s.n,
    mean: s.mean,
    sd: s.sd,
    uA: s.uA,
    uB: s.uB,
    u: s.u,
    nuEff: s.nuEff,
    ciLow: s.ci95 ? s.ci95[0] : null,
    ciHigh: s.ci95 ? s.ci95[1] : null,
  }
}

/** A reading of a cell in SI: samples (values, resolution), or a stated result (values = [value], u, dof). */
export interface CellReading {
  values: readonly number[]
  resolution: number | null
  /** a stated result's standard uncertainty; null or absent for samples */
  u?: number | null
  /** a stated result's degrees of freedom; null or absent: infinite */
  dof?: number | null
}

/**
 * Pools the readings of one cell (in SI). Samples only: one sample set, the values concatenated.
 * With stated results: the samples are pooled first into one result (mean, u, ν_eff), then it and
 * every stated result are combined as independent estimates by inverse-variance weighting
 * (readingStats.combineResults; docs/computation.md §Stated results).
 */
export function poolCell(readings: readonly CellReading[]): CellStats {
  const stated = readings.filter(r => r.u != null)
  if (stated.length === 0) return cellFromStats(pooledStats(readings), readings.length)
  const samples = readings.filter(r => r.u == null)
  const results: ResultEstimate[] = []
  let n = 0
  if (samples.length > 0) {
    const s = pooledStats(samples)
    results.push({ x: s.mean, u: s.u, nu: s.nuEff ?? Infinity })
    n += s.n
  }
  for (const r of stated) {
    if (r.values.length !== 1) throw new RangeError('A stated result holds exactly one value')
    results.push({ x: r.values[0]!, u: r.u!, nu: r.dof ?? Infinity })
    n += 1
  }
  const c = combineResults(results)
  return {
    readings: readings.length,
    n,
    mean: c.mean,
    sd: null,
    uA: null,
    uB: null,
    u: c.u,
    nuEff: c.nuEff,
    ciLow: c.ci95 ? c.ci95[0] : null,
    ciHigh: c.ci95 ? c.ci95[1] : null,
    stated: stated.length,
  }
}

function ci95Of(c: Pick<CellStats, 'ciLow' | 'ciHigh'>): [number, number] | null {
  return c.ciLow === null || c.ciHigh === null ? null : [c.ciLow, c.ciHigh]
}

export function cellStatus(cell: Pick<CellStats, 'mean' | 'ciLow' | 'ciHigh'>, rule: SiRule): CellDecision['status'] {
  return statusOf({ mean: cell.mean, ci95: ci95Of(cell) }, rule) as CellDecision['status']
}

/**
 * Status and movement of every cell of one target, given in revision order. Both rules are
 * unchanged by a change of unit with a positive factor (the status compares in order, Welch's p
 * is scale-free, the noise band is converted with the means), so deciding in SI decides for
 * every display unit. Cells with stated results move by the generalised test (conformance.movementOf).
 */
export function decideCells(cells: readonly (Pick<CellStats, 'n' | 'mean' | 'sd' | 'ciLow' | 'ciHigh'> & Partial<Pick<CellStats, 'u' | 'nuEff' | 'stated'>>)[], rule: SiRule): CellDecision[] {
  return cells.map((cell, i) => {
    const status = cellStatus(cell, rule)
    if (i === 0) return { status, delta: null, p: null, movement: null, real: null, reason: null }
    const before = cells[i - 1]!
    const m = movementOf(before, cell, rule)
    return { status, delta: m.delta, p: m.p, movement: m.movement, real: m.real, reason: m.reason }
  })
}

/** Statistics of a cell or a reading in a display unit: means shift with the offset, spreads don't. */
export interface StatsInUnit {
  n: number
  mean: number
  sd: number | null
  uA: number | null
  uB: number | null
  u: number | null
  /** null when absent or infinite (JSON has no Infinity) */
  nuEff: number | null
  ci95: [number, number] | null
}

const orNull = (x: number | null, f: (v: number) => number) => (x === null ? null : f(x))

export function cellInUnit(cell: Omit<CellStats, 'readings'>, unit: UnitInfo): StatsInUnit {
  const diff = (v: number) => diffFromSI(v, unit)
  return {
    n: cell.n,
    mean: fromSI(cell.mean, unit),
    sd: orNull(cell.sd, diff),
    uA: orNull(cell.uA, diff),
    uB: orNull(cell.uB, diff),
    u: orNull(cell.u, diff),
    nuEff: cell.nuEff !== null && Number.isFinite(cell.nuEff) ? cell.nuEff : null,
    ci95: cell.ciLow === null || cell.ciHigh === null ? null : [fromSI(cell.ciLow, unit), fromSI(cell.ciHigh, unit)],
  }
}

/**
 * A value converted back from SI, rounded to 12 significant digits: thresholds typed as 24 km/h
 * or 80 °C come back as typed instead of 24.000000000000004. For definitions only, not statistics.
 */
export function tidyNumber(x: number): number {
  return Number(x.toPrecision(12))
}
