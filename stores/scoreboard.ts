import type { Scoreboard, ScoreTarget } from '#shared/types/api'

/**
 * Each build's scoreboard (the target strip and the readings matrix come from this one answer),
 * shared by the build's pages so a reading added anywhere updates the strip.
 */
export const useScoreboardStore = defineStore('scoreboard', () => {
  const scoreboards = ref<Record<string, Scoreboard>>({})
  // forwards the visitor's cookie while rendering on the server
  const request = useRequestFetch()

  // one request per build at a time: a page that asks while another's request is still out (the
  // old and the new page overlap during a navigation, and the old one's request outlives it) shares it
  const inFlight = new Map<string, Promise<boolean>>()
  function load(build: string): Promise<boolean> {
    const pending = inFlight.get(build)
    if (pending) return pending
    const asked = (async () => {
      try {
        scoreboards.value[build] = await request<Scoreboard>(`/api/v1/builds/${encodeURIComponent(build)}/scoreboard`)
        return true
      }
      finally {
        inFlight.delete(build)
      }
    })()
    inFlight.set(build, asked)
    return asked
  }

  /** Optimistic: the strip shows the new order at once and falls back if the server refuses. */
  async function reorder(build: string, keys: string[]) {
    const scoreboard = scoreboards.value[build]
    if (!scoreboard) return
    const before = scoreboard.targets
    const byKey = new Map(before.map(t => [t.key, t]))
    scoreboard.targets = keys.map(k => byKey.get(k)).filter((t): t is ScoreTarget => Boolean(t))
    try {
      await $fetch(`/api/v1/builds/${encodeURIComponent(build)}/targets/order`, { method: 'POST', body: { keys } })
    }
    catch (err) {
      scoreboard.targets = before
      throw err
    }
  }

  return { scoreboards, load, reorder }
})
