import type { ReadingCreated } from '#shared/types/api'
import { formatMeasure } from './measureFormat'
import { STATUS_WORDS } from './statusWords'

/**
 * A line for the confirmation notice: "n = 5, 24.31 ± 0.22 km/h — Met" (a stated result: "Stated
 * result, 42.50 ± 0.98 N·m — Met"; a track: "Track (fitted speed), …"), and the pooled cell's.
 */
export function readingSummary(r: ReadingCreated): string {
  const kind = r.reading.kind === 'stated' ? 'Stated result' : r.reading.kind === 'track' ? 'Track (fitted speed)' : `n = ${r.reading.n}`
  const own = `${kind}, ${formatMeasure(r.reading.mean, r.reading.ci95, r.reading.unit)} — ${STATUS_WORDS[r.reading.status]}`
  if (!r.pooled) return own
  const p = r.pooled
  return `${own}. Pooled with the revision's other readings: n = ${p.n}, ${formatMeasure(p.mean, p.ci95, r.reading.unit)} — ${STATUS_WORDS[p.status]}`
}
