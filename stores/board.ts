import type { BoardData, FindingCard, FindingSummary } from '#shared/types/findings'
import { LANE_LABELS, boardOrder, type Lane } from '#shared/utils/lanes'

export interface MoveOutcome {
  ok: boolean
  status?: number
  message: string
  /** a lane rule refused, and the caller may override it (an Owner) */
  canOverride?: boolean
}

/** Why a card's last move was refused, shown on the card. */
export interface CardRefusal {
  message: string
  lane: Lane
  /** the rule may be overridden (by an Owner) */
  canOverride: boolean
}

interface MoveAnswer {
  finding: FindingSummary
  respread: boolean
  override: boolean
}

/**
 * Each build's findings board. Moves are optimistic: the card takes its new place at once, and
 * goes back (with the server's reason on the card) when the server refuses. A stale card is
 * replaced by the server's current one.
 */
export const useBoardStore = defineStore('board', () => {
  const boards = ref<Record<string, BoardData>>({})
  /** per card id, why its last move was refused */
  const refusals = ref<Record<string, CardRefusal>>({})
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
