import type { ForecastView } from '#shared/utils/forecast'

/** The forecast in a few words, without its caveat. */
export function forecastWords(f: ForecastView): string {
  switch (f.status) {
    case 'converging': return f.crossesAt ? `meets it at ${f.crossesAt}` : `meets it ${f.crossesAfterLast} revisions on`
    case 'not-converging': return 'not converging'
    case 'already-met': return 'latest mean on the good side'
    default: return 'not enough revisions yet'
  }
}
