import { promisify } from 'node:util'
import { gzip } from 'node:zlib'
import type { H3Event } from 'h3'
import { LRUCache } from 'lru-cache'
import type { BuildAccess } from '../auth'

// Answers kept while the data behind them holds. A build's reads (its scoreboard, findings, a
// target's history …) are computed from the build's team's data only, and the team's data stamp
// (migrations/…_create-data-stamps.ts) changes in the same commit as any of that data. So an answer
// computed after reading stamp S is still the answer while the stamp reads S: requireBuildRole
// reads the stamp in the same statement as the caller's access, and a kept answer costs that one
// round trip. The stamp is read before the data, so a kept answer is never older than its stamp.
//
// Kept per process, bounded by size (least recently used first out); keys hold the stamp, the
// caller's role (some answers show what a role may do) and the request's path with its query.
// Callers asking for the same answer at once share one computation.

const MAX_BYTES = 128 * 1024 * 1024
/** smaller answers go out as they are: gzip would save less than it costs */
const GZIP_FROM = 1024
const gzipAsync = promisify(gzip)

/** An answer's JSON bytes, and their gzip'd form once a client has asked for it. */
interface Kept { body: Buffer, gzip?: Promise<Buffer> }

// a gzip'd form is a fraction of its answer: a quarter more is allowed for it
const answers = new LRUCache<string, Kept>({ maxSize: MAX_BYTES, sizeCalculation: k => Math.max(1, Math.ceil(k.body.length * 1.25)) })
const computing = new Map<string, Promise<Kept>>()

/**
 * The JSON answer `compute` gives, kept for the same caller role, path and team data stamp. The
 * body goes out as serialised JSON, gzip'd for a client that accepts it (typed as `T` for the
 * route's callers, which parse it back).
 */
export async function keptAnswer<T>(event: H3Event, access: Pick<BuildAccess, 'build' | 'role' | 'stamps'>, compute: () => Promise<T>): Promise<T> {
  if (!access.stamps) return await compute()
  const key = `${access.stamps.team}|${access.build.id}|${access.role}|${event.path}`
  let kept = answers.get(key)
  setResponseHeader(event, 'Ratchet-Cache', kept ? 'hit' : 'miss')
  if (!kept) {
    let pending = computing.get(key)
    if (!pending) {
      pending = compute().then(value => ({ body: Buffer.from(JSON.stringify(value)) }))
      computing.set(key, pending)
      void pending.then(k => answers.set(key, k), () => {}).finally(() => computing.delete(key))
    }
    kept = await pending
  }
  setResponseHeaders(event, { 'content-type': 'application/json', 'vary': 'Accept-Encoding' })
  // h3 sends a Buffer as it is: the JSON text, serialised (and compressed) once
  if (kept.body.length >= GZIP_FROM && acceptsGzip(getRequestHeader(event, 'accept-encoding'))) {
    kept.gzip ??= gzipAsync(kept.body)
    const body = await kept.gzip
    setResponseHeader(event, 'content-encoding', 'gzip')
    return body as unknown as T
  }
  return kept.body as unknown as T
}
