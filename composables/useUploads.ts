import type { FileCreated } from '#shared/types/files'
import { formatBytes } from '#shared/utils/fileNames'

// A queue of file uploads with per-file progress and cancel. XMLHttpRequest rather than fetch:
// only it reports upload progress. Two files go at a time; the rest wait their turn.

export interface UploadItem {
  key: number
  name: string
  size: number
  /** bytes of the file sent so far */
  sent: number
  state: 'waiting' | 'sending' | 'done' | 'failed' | 'cancelled'
  error: string
  result: FileCreated | null
}

const AT_ONCE = 2

export function useUploads(opts: {
  /** POST target, e.g. /api/v1/builds/trailhopper/files */
  url: () => string
  /** revision, reading or finding to attach to */
  fields?: () => Record<string, string | null | undefined>
  /** refuse files over this size before sending them */
  maxBytes?: () => number | null | undefined
  onDone?: (file: FileCreated) => void
}) {
  const items = ref<UploadItem[]>([])
  const requests = new Map<number, XMLHttpRequest>()
  const files = new Map<number, File>()
  let next = 1

  const active = computed(() => items.value.filter(i => i.state === 'waiting' || i.state === 'sending').length)

  function item(key: number) {
    return items.value.find(i => i.key === key)
  }

  function pump() {
    const sending = items.value.filter(i => i.state === 'sending').length
    for (const it of items.value.filter(i => i.state === 'waiting').slice(0, Math.max(0, AT_ONCE - sending))) send(it.key)
  }

  function send(key: number) {
    const it = item(key)
    const file = files.get(key)
    if (!it || !file) return
    const form = new FormData()
    for (const [k, v] of Object.entries(opts.fields?.() ?? {})) if (v) form.append(k, v)
    form.append('file', file, file.name)
    const xhr = new XMLHttpRequest()
    requests.set(key, xhr)
    it.state = 'sending'
    xhr.upload.onprogress = (e) => {
      // e.total counts the multipart framing too: scale to the file's own size
      if (e.lengthComputable && e.total > 0) item(key)!.sent = Math.min(it.size, Math.round(it.size * e.loaded / e.total))
    }
    const finish = (state: UploadItem['state'], error = '') => {
      const now = item(key)
      if (now && now.state === 'sending') {
        now.state = state
        now.error = error
      }
      requests.delete(key)
      files.delete(key)
      pump()
    }
    xhr.onload = () => {
      let body: { message?: string } & Partial<FileCreated> = {}
      try { body = JSON.parse(xhr.responseText) }
      catch { /* not JSON */ }
      if (xhr.status === 201 && body.id) {
        const now = item(key)!
        now.sent = now.size
        now.result = body as FileCreated
        finish('done')
        opts.onDone?.(body as FileCreated)
      }
      else finish('failed', body.message ?? `The server answered ${xhr.status}`)
    }
    xhr.onerror = () => finish('failed', 'The upload was cut off; check your connection and try again')
    xhr.onabort = () => finish('cancelled')
    xhr.open('POST', opts.url())
    xhr.setRequestHeader('accept', 'application/json')
    xhr.send(form)
  }

  function add(list: FileList | File[] | null | undefined) {
    const max = opts.maxBytes?.() ?? null
    for (const file of Array.from(list ?? [])) {
      const key = next++
      const tooBig = max !== null && file.size > max
      items.value.push({
        key,
        name: file.name,
        size: file.size,
        sent: 0,
        state: tooBig ? 'failed' : 'waiting',
        error: tooBig ? `${formatBytes(file.size)} is over the limit of ${formatBytes(max)} per file` : '',
        result: null,
      })
      if (!tooBig) files.set(key, file)
    }
    pump()
  }

  function cancel(key: number) {
    const it = item(key)
    if (!it) return
    if (it.state === 'waiting') {
      it.state = 'cancelled'
      files.delete(key)
    }
    requests.get(key)?.abort()
  }

  function clearFinished() {
    items.value = items.value.filter(i => i.state === 'waiting' || i.state === 'sending')
  }

  onBeforeUnmount(() => {
    for (const xhr of requests.values()) xhr.abort()
  })

  return { items, active, add, cancel, clearFinished }
}
