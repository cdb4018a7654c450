// Short confirmations and failures shown in a polite live region, away from any one form. A
// notice may carry one action (e.g. "Undo"), offered while the notice shows.

export interface NoticeAction {
  label: string
  run: () => void | Promise<void>
}

export interface Notice {
  id: number
  text: string
  tone: 'ok' | 'error'
  action?: NoticeAction
}

export const useNoticeStore = defineStore('notices', () => {
  const items = ref<Notice[]>([])
  let next = 1

  function dismiss(id: number) {
    items.value = items.value.filter(n => n.id !== id)
  }

  function push(text: string, tone: Notice['tone'] = 'ok', action?: NoticeAction) {
    const id = next++
    items.value.push({ id, text, tone, action })
    // a notice with an action stays longer, so there is time to reach its button
    if (import.meta.client) setTimeout(() => dismiss(id), action ? 10000 : tone === 'error' ? 9000 : 5000)
    return id
  }

  async function act(id: number) {
    const n = items.value.find(i => i.id === id)
    dismiss(id)
    await n?.action?.run()
  }

  return { items, push, dismiss, act }
})
