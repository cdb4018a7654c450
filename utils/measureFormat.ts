// Display rules for measured numbers, shared by every table and card that shows one.

const MINUS = '\u2212'

/** Decimals that give the half-width two significant digits (the usual way to quote an interval). */
export function decimalsFor(uncertainty: number | null | undefined): number | null {
  if (uncertainty == null || !Number.isFinite(uncertainty) || uncertainty <= 0) return null
  return Math.min(8, Math.max(0, 1 - Math.floor(Math.log10(uncertainty))))
}

/** A number for display: fixed decimals when given, else four significant digits. */
export function formatNumber(x: number | null | undefined, decimals?: number | null): string {
  if (x == null || !Number.isFinite(x)) return '—'
  const text = decimals != null
    ? x.toFixed(decimals)
    : String(Number(x.toPrecision(Math.abs(x) >= 1e4 ? 6 : 4)))
  return text.replace(/^-/, MINUS)
}

/** A change with its sign always shown: "+0.12", "−0.12", "0". */
export function formatSigned(x: number | null | undefined, decimals?: number | null): string {
  if (x == null || !Number.isFinite(x)) return '—'
  const text = formatNumber(Math.abs(x), decimals)
  return x > 0 ? `+${text}` : x < 0 ? `${MINUS}${text}` : text
}

export function halfWidth(ci: readonly [number, number] | null | undefined): number | null {
  return ci ? (ci[1] - ci[0]) / 2 : null
}

/** "24.53 ± 0.12 km/h", or the bare mean when there is no interval. */
export function formatMeasure(mean: number | null | undefined, ci: readonly [number, number] | null | undefined, unit = ''): string {
  if (mean == null) return '—'
  const h = halfWidth(ci)
  const d = decimalsFor(h)
  const body = h != null ? `${formatNumber(mean, d)} ± ${formatNumber(h, d)}` : formatNumber(mean)
  return unit ? `${body} ${unit}` : body
}

export function formatPercent(x: number | null | undefined): string {
  if (x == null || !Number.isFinite(x)) return '—'
  return `${formatSigned(x, Math.abs(x) >= 10 ? 0 : 1)} %`
}

/** ν_eff for display: the server sends null both when it is absent and when it is infinite. */
export function formatNuEff(s: { nuEff: number | null, u: number | null, ci95: readonly [number, number] | null }): string {
  if (s.nuEff != null) return formatNumber(s.nuEff, s.nuEff >= 100 ? 0 : 1)
  return s.u != null && s.ci95 ? '∞' : '—'
}
