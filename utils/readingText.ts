import type { ReadingDetail } from '#shared/types/api'

// How pages write a stated result: "10.52 ± 0.03 N (k = 2.57, ν = 5)", as entered.

/** The coverage factor of a reading's interval, from its u and interval; null without one (or u = 0). */
export function coverageOf(r: Pick<ReadingDetail, 'stats'>): number | null {
  const { u, ci95, mean } = r.stats
  return u && ci95 ? (ci95[1] - mean) / u : null
}

export function statedText(r: Pick<ReadingDetail, 'valuesEntered' | 'uEntered' | 'unitEntered' | 'dof' | 'stats'>): string {
  const k = coverageOf(r)
  const nu = r.dof === null ? '∞' : formatNumber(r.dof)
  const extra = r.uEntered === 0 ? 'exact' : `k = ${k === null ? '—' : k.toFixed(2)}, ν = ${nu}`
  return `${formatNumber(r.valuesEntered[0] ?? null)} ± ${formatNumber(r.uEntered)} ${r.unitEntered} (${extra})`
}
