// Short confirmations and failures shown in a polite live region, away from any one form.

export interface Notice {
  id: number
  text: string
  tone: 'ok' | 'error'
}

export const useNoticeStore = defineStore('notices', () => {
  const items = ref<Notice[]>([])
  let next = 1

  function dismiss(id: number) {
    items.value = items.value.filter(n => n.id !== id)
  }

  function push(text: string, tone: Notice['tone'] = 'ok') {
    const id = next++
    items.value.push({ id, text, tone })
    if (import.meta.client) setTimeout(() => dismiss(id), tone === 'error' ? 9000 : 5000)
  }

  return { items, push, dismiss }
})
