import type { TargetStatus } from '#shared/utils/conformance'

export const STATUS_WORDS: Record<TargetStatus, string> = {
  met: 'Met',
  marginal: 'Marginal',
  short: 'Short',
  untested: 'Untested',
}

export const STATUS_HINTS: Record<TargetStatus, string> = {
  met: 'The whole 95 % interval clears the threshold',
  marginal: 'The 95 % interval straddles the threshold',
  short: 'The whole 95 % interval misses the threshold',
  untested: 'No reading yet',
}
