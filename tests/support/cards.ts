import type { FindingCard } from '#shared/types/findings'

let serial = 0

/** A board card with plausible defaults; pass what the test is about. */
export function makeCard(overrides: Partial<FindingCard> = {}): FindingCard {
  serial += 1
  return {
    id: `00000000-0000-4000-8000-${String(serial).padStart(12, '0')}`,
    title: `Finding ${serial}`,
    lane: 'spotted',
    severity: 'degrades',
    rank: 'a0',
    version: 1,
    seenOn: null,
    targets: [],
    fixes: [],
    description: '',
    comments: 0,
    verifiedOn: null,
    closeBlocker: null,
    ...overrides,
  }
}
