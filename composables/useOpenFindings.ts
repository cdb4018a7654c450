import type { OpenFindingsByTarget } from '#shared/types/findings'

/**
 * A build's open findings by target: one request per build, shared under one key by every target
 * card that asks. A card mounting while the request is in flight joins it (`dedupe: 'defer'`)
 * instead of cancelling it and asking again, so a strip of seven cards makes one request, not
 * seven of which six are aborted. The board refreshes it under the same key after moves.
 */
export function useOpenFindings(build: string) {
  return useFetch<OpenFindingsByTarget>(`/api/v1/builds/${encodeURIComponent(build)}/findings/open`, {
    key: `open-findings-${build}`,
    default: () => ({ canFile: false, byTarget: {} }),
    dedupe: 'defer',
  })
}
