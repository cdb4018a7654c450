/**
 * A page's view of its build's scoreboard: loads it (server-rendered, keyed by build) and
 * reorders targets, reporting a refused order as a notice.
 */
export async function useScoreboard(build: string) {
  const store = useScoreboardStore()
  const notices = useNoticeStore()
  const { status, error, refresh } = await useAsyncData(`scoreboard-${build}`, () => store.load(build))
  const scoreboard = computed(() => store.scoreboards[build])

  async function reorder(keys: string[]) {
    try {
      await store.reorder(build, keys)
    }
    catch (err) {
      notices.push(`The new order was not saved: ${apiError(err).message}`, 'error')
    }
  }

  return { scoreboard, status, error, refresh, reorder }
}
