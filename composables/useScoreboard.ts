/**
 * A page's view of its build's scoreboard: loads it (server-rendered, keyed by build) and
 * reorders targets, reporting a refused order as a notice.
 */
export async function useScoreboard(build: string) {
  const store = useScoreboardStore()
  const notices = useNoticeStore()
  // pages of one build share the key; one mounting while the other's request is in flight (the
  // old and new page overlap during a navigation) joins that request instead of asking again
  const { status, error, refresh } = await useAsyncData(`scoreboard-${build}`, () => store.load(build), { dedupe: 'defer' })
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
