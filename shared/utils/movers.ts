// Which revision moved which number: the movement between any two revisions' cells of a
// target (not only neighbours: a revision against its parent, or any A against any B), and the
// order in which pages list movements — real ones (Gained, Slipped) first.

import type { MovementResult, MovementTarget } from './conformance'
import { movementOf } from './conformance'

/** What a pairwise comparison needs of a cell: pooled samples, or a derived value with its u. */
export interface PairCell {
  mean: number
  n: number
  sd: number | null
  u: number | null
  /** effective degrees of freedom of u; null: infinite (or no u) */
  nuEff?: number | null
  /** stated results pooled in the cell (0 or absent: samples only) */
  stated?: number
}

/**
 * Movement from `a` to `b` (delta = b − a), by the rules of docs/computation.md §Movement
 * between revisions: with a stated result on either side, the generalised test on (u, ν_eff);
 * Welch's test between the two pooled sample sets when both have n ≥ 2; for a
 * derived target |Δ| > 2·√(u₁² + u₂²); else the noise band; else steady for lack of data.
 */
export function compareCells(a: PairCell, b: PairCell, rule: MovementTarget, derived = false): MovementResult {
  return derived
    ? movementOf(a, b, rule, { derived: true, uBefore: a.u, uNow: b.u })
    : movementOf(a, b, rule)
}

export interface Ranked {
  movement: MovementResult['movement'] | null
  real: boolean | null
  delta: number | null
  p: number | null
}

/**
 * Real movements first (Gained and Slipped alike), each group by size (`size`, default |delta|:
 * pass a relative size when the items are of different targets), then by p (smaller first; a
 * movement without p after one with). Items with nothing to compare with come last. Stable.
 */
export function rankMovements<T extends Ranked>(items: readonly T[], size: (item: T) => number = i => Math.abs(i.delta ?? 0)): T[] {
  const group = (i: T) => (i.movement === null ? 2 : i.real ? 0 : 1)
  return items
    .map((item, at) => ({ item, at }))
    .sort((x, y) => {
      const g = group(x.item) - group(y.item)
      if (g !== 0) return g
      const s = size(y.item) - size(x.item)
      if (Number.isFinite(s) && s !== 0) return s
      const px = x.item.p ?? Infinity
      const py = y.item.p ?? Infinity
      if (px !== py) return px < py ? -1 : 1
      return x.at - y.at
    })
    .map(x => x.item)
}
