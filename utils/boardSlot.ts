import type { FindingCard } from '#shared/types/findings'
import { rankBetween } from '#shared/utils/rank'

// Where a dropped or stepped card lands, worked out on the client before the server answers.

/** Where a card goes in its new lane: below `after`, above `before`; neither: the end. */
export interface BoardSlot {
  before?: string
  after?: string
}

const isSafety = (c: Pick<FindingCard, 'severity'>) => c.severity === 'safety'

/**
 * The neighbours to send for a card dropped at its place in `shown` (a lane as displayed after
 * the drop, the card included). Safety findings always sit first, so only cards of the card's own
 * group (safety or not) count as neighbours; a card dropped among the other group lands at the
 * near end of its own.
 */
export function boardSlot(shown: readonly FindingCard[], id: string): BoardSlot {
  const index = shown.findIndex(c => c.id === id)
  const card = shown[index]
  if (!card) return {}
  const group = shown.filter(c => c.id !== id && isSafety(c) === isSafety(card))
  const above = shown.slice(0, index).filter(c => isSafety(c) === isSafety(card)).length
  const below = group[above]
  if (below) return { before: below.id }
  const last = group[group.length - 1]
  return last ? { after: last.id } : {}
}

/** The rank the server will give a card put into `laneCards` (the lane, without the card) at `slot`. */
export function guessRank(laneCards: readonly FindingCard[], slot: BoardSlot): string {
  const byRank = [...laneCards].sort((a, b) => (a.rank < b.rank ? -1 : a.rank > b.rank ? 1 : 0))
  const at = (id: string) => byRank.findIndex(c => c.id === id)
  try {
    if (slot.before && at(slot.before) >= 0) {
      const i = at(slot.before)
      return rankBetween(byRank[i - 1]?.rank ?? null, byRank[i]!.rank)
    }
    if (slot.after && at(slot.after) >= 0) {
      const i = at(slot.after)
      return rankBetween(byRank[i]!.rank, byRank[i + 1]?.rank ?? null)
    }
    return rankBetween(byRank[byRank.length - 1]?.rank ?? null, null)
  }
  catch {
    return byRank[byRank.length - 1]?.rank ?? 'a0'
  }
}
