import { createHash } from 'node:crypto'
import { gzipSync } from 'node:zlib'
import type { H3Event } from 'h3'
import { LRUCache } from 'lru-cache'

// Server-rendered build pages, kept while nothing they show has changed. Everything on a page under
// /builds/<build> comes from the build's team (its builds, members, files …) and from the signed-in
// person; each has a data stamp that changes in the same commit as that data (keptAnswers.ts). A page is
// kept under its path and query, the request's cookies (the session and the chosen theme, so one
// person's page is never served to another) and both stamps, read with the caller's access in one
// statement before the page is rendered, so a kept page is never older than its stamps. Pages show
// some times relative to now ("3 min ago"): a kept page is served for at most a minute.
//
// A kept page is served as the same bytes every time, gzip'd (made once, when kept) to a client that
// accepts it, as browsers do: the nonce it was rendered with is taken out and its policy names its
// inline scripts by their digests instead (csp.ts). A page that rendered with an error (a fetch
// that failed, a status other than 200) is not kept.

const PAGE_TTL_MS = 60_000
const MAX_BYTES = 64 * 1024 * 1024
const BUILD_PAGE = /^\/builds\/([^/?#]+)(?:[/?#]|$)/

interface KeptPage { body: Buffer, gzip: Buffer, csp: string, type: string }

const pages = new LRUCache<string, KeptPage>({ maxSize: MAX_BYTES, sizeCalculation: p => p.body.length + p.gzip.length, ttl: PAGE_TTL_MS })
interface Rendering { done: Promise<KeptPage | null>, settle: (page: KeptPage | null) => void }
const rendering = new Map<string, Rendering>()

const KEY = Symbol('kept page key')
type Context = Record<symbol, string | undefined>

/**
 * For a signed-in GET of a build page: the kept page, or undefined after marking
 * the request so its rendering is kept (keepPage). A page being rendered for the same key is waited for.
 */
export async function keptPage(event: H3Event): Promise<Buffer | undefined> {
  if (import.meta.dev || event.method !== 'GET') return
  const match = BUILD_PAGE.exec(event.path)
  const cookie = getRequestHeader(event, 'cookie')
  if (!match || !cookie) return
  let access
  try {
    access = await requireBuildRole(event, decodeURIComponent(match[1]!), 'reviewer')
  }
  catch {
    return // signed out, not a member, no such build: the page says so as it renders
  }
  if (!access.stamps) return
  const key = [event.path, createHash('sha256').update(cookie).digest('base64url'), access.role, access.stamps.team, access.stamps.user].join('|')
  const page = pages.get(key) ?? await rendering.get(key)?.done
  if (page) {
    const gzip = acceptsGzip(getRequestHeader(event, 'accept-encoding'))
    setResponseHeaders(event, { 'content-type': page.type, 'content-security-policy': page.csp, 'vary': 'Accept-Encoding', 'Ratchet-Cache': 'hit' })
    if (gzip) setResponseHeader(event, 'content-encoding', 'gzip')
    return gzip ? page.gzip : page.body
  }
  let settle!: (page: KeptPage | null) => void
  const done = new Promise<KeptPage | null>((resolve) => { settle = resolve })
  const mine = { done, settle }
  rendering.set(key, mine)
  ;(event.context as Context)[KEY] = key
  setResponseHeader(event, 'Ratchet-Cache', 'miss')
  // whatever becomes of the rendering, those waiting for it go on (and a later rendering of the
  // same page, begun since, is not theirs to end)
  event.node.res.once('close', () => finish(key, null, mine))
  return undefined
}

function finish(key: string, page: KeptPage | null, only?: Rendering) {
  const waiting = rendering.get(key)
  if (!waiting || (only && waiting !== only)) return
  rendering.delete(key)
  if (page) pages.set(key, page)
  waiting.settle(page)
}

/** After a marked page is rendered: keep it if it rendered whole. */
export function keepPage(event: H3Event, response: { body?: unknown, statusCode?: number, headers?: Record<string, unknown> }, failed: boolean) {
  const key = (event.context as Context)[KEY]
  if (!key) return
  const type = String(response.headers?.['content-type'] ?? '')
  const whole = !failed && (response.statusCode ?? 200) === 200 && typeof response.body === 'string' && type.startsWith('text/html')
  finish(key, whole ? keptForm(response.body as string, pageNonce(event), type) : null)
}

function keptForm(rendered: string, nonce: string, type: string): KeptPage {
  const html = rendered.replaceAll(` nonce="${nonce}"`, '')
  const body = Buffer.from(html)
  return { body, gzip: gzipSync(body), csp: contentSecurityPolicy(inlineScriptHashes(html)), type }
}

/** Whether an Accept-Encoding header takes gzip (and doesn't refuse it with q=0). */
export function acceptsGzip(header: string | undefined): boolean {
  for (const part of (header ?? '').split(',')) {
    const [coding, ...params] = part.trim().toLowerCase().split(';')
    if (coding !== 'gzip' && coding !== 'x-gzip') continue
    const q = params.map(p => p.trim()).find(p => p.startsWith('q='))
    return q === undefined || Number(q.slice(2)) > 0
  }
  return false
}
