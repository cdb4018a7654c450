/** What the compare page needs of a target's history to choose the revisions it opens on. */
export interface PairTarget {
  noiseBand?: number | null
  history: readonly {
    revision: string
    mean: number
    ci95: readonly [number, number] | null
    delta: number | null
    real: boolean | null
    movement: string | null
  }[]
}

export interface ComparePair {
  a: string
  b: string
  /** the size of the movement that chose the pair, in combined 95 % half-widths (or noise bands); null: nothing moved */
  size: number | null
}

const halfOf = (ci: readonly [number, number] | null) => (ci ? (ci[1] - ci[0]) / 2 : null)

/**
 * The two revisions "Compare" opens on: the pair (the previous revision with a value, this one)
 * holding the largest real movement of any target. Targets have different units, so a movement is
 * measured against its own scatter: |Δ| / √(U₁² + U₂²) with U the 95 % half-widths, or |Δ| / the
 * noise band when an interval is missing (Ratchet's ordering rule, not a published test). Ties go
 * to the later pair. With no real movement anywhere: the newest two revisions, as before.
 */
export function defaultComparePair(targets: readonly PairTarget[], revisions: readonly string[]): ComparePair {
  const position = new Map(revisions.map((r, i) => [r, i]))
  let best: (ComparePair & { at: number }) | null = null
  for (const t of targets) {
    const history = t.history.filter(h => position.has(h.revision)).sort((x, y) => position.get(x.revision)! - position.get(y.revision)!)
    for (let i = 1; i < history.length; i++) {
      const h = history[i]!
      if (!h.real || h.movement === 'steady' || h.delta == null) continue
      const before = history[i - 1]!
      const u1 = halfOf(before.ci95)
      const u2 = halfOf(h.ci95)
      const scale = u1 != null && u2 != null && Math.hypot(u1, u2) > 0
        ? Math.hypot(u1, u2)
        : (t.noiseBand != null && t.noiseBand > 0 ? t.noiseBand : null)
      const size = scale != null ? Math.abs(h.delta) / scale : 0
      const at = position.get(h.revision)!
      if (!best || size > best.size! || (size === best.size && at > best.at)) best = { a: before.revision, b: h.revision, size, at }
    }
  }
  if (best) {
    const { a, b, size } = best
    return { a, b, size }
  }
  return { a: revisions.at(-2) ?? revisions[0] ?? '', b: revisions.at(-1) ?? '', size: null }
}
