import type { Scoreboard, ScoreTarget } from '#shared/types/api'

/** GET /api/teams/:team */
export interface TeamInfo {
  id: string
  name: string
  slug: string
  personal: boolean
  demo: boolean
  role: Role
}

/** GET /api/units */
export interface UnitOption {
  unit: string
  quantity: string
  quantityLabel: string
  label: string
}

/**
 * Each build's scoreboard (the target strip and the readings matrix come from this one answer),
 * shared by the build's pages so a reading added anywhere updates the strip.
 */
export const useScoreboardStore = defineStore('scoreboard', () => {
  const boards = ref<Record<string, Scoreboard>>({})
  // forwards the visitor's cookie while rendering on the server
  const request = useRequestFetch()

  async function load(build: string) {
    boards.value[build] = await request<Scoreboard>(`/api/v1/builds/${encodeURIComponent(build)}/scoreboard`)
    return true
  }

  /** Optimistic: the strip shows the new order at once and falls back if the server refuses. */
  async function reorder(build: string, keys: string[]) {
    const board = boards.value[build]
    if (!board) return
    const before = board.targets
    const byKey = new Map(before.map(t => [t.key, t]))
    board.targets = keys.map(k => byKey.get(k)).filter((t): t is ScoreTarget => Boolean(t))
    try {
      await $fetch(`/api/v1/builds/${encodeURIComponent(build)}/targets/order`, { method: 'POST', body: { keys } })
    }
    catch (err) {
      board.targets = before
      throw err
    }
  }

  return { boards, load, reorder }
})

/**
 * A page's view of its build's scoreboard: loads it (server-rendered, keyed by build) and
 * reorders targets, reporting a refused order as a notice.
 */
export async function useBuildBoard(build: string) {
  const store = useScoreboardStore()
  const notices = useNoticeStore()
  const { status, error, refresh } = await useAsyncData(`scoreboard-${build}`, () => store.load(build))
  const board = computed(() => store.boards[build])

  async function reorder(keys: string[]) {
    try {
      await store.reorder(build, keys)
    }
    catch (err) {
      notices.push(`The new order was not saved: ${apiError(err).message}`, 'error')
    }
  }

  return { board, status, error, refresh, reorder }
}
