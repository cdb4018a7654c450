import type { BoardData, FindingCard, FindingSummary } from '#shared/types/findings'
import { LANE_LABELS, boardOrder, type Lane } from '#shared/utils/lanes'
import { rankBetween } from '#shared/utils/rank'

/** Where a card goes in its new lane: below `after`, above `before`; neither: the end. */
export interface BoardSlot {
  before?: string
  after?: string
}

export interface MoveOutcome {
  ok: boolean
  status?: number
  message: string
  /** a lane rule refused, and the caller may override it (an Owner) */
  canOverride?: boolean
}

interface MoveAnswer {
  finding: FindingSummary
  respread: boolean
  override: boolean
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
function guessRank(laneCards: readonly FindingCard[], slot: BoardSlot): string {
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

/**
 * Each build's findings board. Moves are optimistic: the card takes its new place at once, and
 * goes back (with the server's reason on the card) when the server refuses. A stale card is
 * replaced by the server's current one.
 */
export const useBoardStore = defineStore('board', () => {
  const boards = ref<Record<string, BoardData>>({})
  /** per card id, why its last move was refused */
  const refusals = ref<Record<string, { message: string, lane: Lane, canOverride: boolean }>>({})
  /** the latest move or refusal, for the board's live region */
  const announcement = ref('')
  // forwards the visitor's cookie while rendering on the server
  const request = useRequestFetch()

  async function load(build: string) {
    boards.value[build] = await request<BoardData>(`/api/v1/builds/${encodeURIComponent(build)}/findings/board`)
    return true
  }

  function lane(build: string, name: Lane): FindingCard[] {
    return boardOrder((boards.value[build]?.findings ?? []).filter(c => c.lane === name))
  }

  function card(build: string, id: string): FindingCard | undefined {
    return boards.value[build]?.findings.find(c => c.id === id)
  }

  function position(build: string, id: string): string {
    const c = card(build, id)
    if (!c) return ''
    const list = lane(build, c.lane)
    return `${LANE_LABELS[c.lane]}, ${list.findIndex(x => x.id === id) + 1} of ${list.length}`
  }

  function dismissRefusal(id: string) {
    if (id in refusals.value) refusals.value = Object.fromEntries(Object.entries(refusals.value).filter(([k]) => k !== id))
  }

  async function move(build: string, id: string, to: Lane, slot: BoardSlot, override?: string): Promise<MoveOutcome> {
    const c = card(build, id)
    if (!c) return { ok: false, message: 'That card is no longer on the board' }
    const before = { ...c }
    c.lane = to
    c.rank = guessRank(lane(build, to).filter(x => x.id !== id), slot)
    dismissRefusal(id)
    try {
      const answer = await $fetch<MoveAnswer>(`/api/v1/findings/${id}/move`, {
        method: 'POST',
        body: { lane: to, ...slot, version: before.version, ...(override ? { override: { reason: override } } : {}) },
      })
      Object.assign(c, answer.finding)
      if (answer.respread || to === 'closed' || before.lane === 'closed') await load(build)
      announcement.value = `${c.title}: moved to ${position(build, id)}${answer.override ? ' (rule overridden)' : ''}.`
      return { ok: true, message: announcement.value }
    }
    catch (err) {
      const info = apiError(err)
      Object.assign(c, before)
      const data = (err as { data?: { data?: { current?: FindingSummary, canOverride?: boolean } } }).data?.data
      if (info.status === 409 && data?.current) Object.assign(c, data.current)
      const canOverride = info.status === 422 && Boolean(data?.canOverride)
      refusals.value = { ...refusals.value, [id]: { message: info.message, lane: to, canOverride } }
      announcement.value = `${c.title} was not moved: ${info.message}`
      return { ok: false, status: info.status, message: info.message, canOverride }
    }
  }

  /** Replaces a card with the server's copy after an edit elsewhere (the detail page). */
  function upsert(build: string, summary: FindingSummary) {
    const c = card(build, summary.id)
    if (c) Object.assign(c, summary)
  }

  return { boards, refusals, announcement, load, lane, card, position, move, upsert, dismissRefusal }
})
