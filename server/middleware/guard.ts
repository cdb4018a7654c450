import type { H3Event } from 'h3'

// Every request that changes something passes here before any handler runs:
//
// 1. Cross-site requests: a POST/PUT/PATCH/DELETE whose Origin (or, without one, Referer) is not
//    the app's own (NUXT_APP_URL, or the origin the request itself was addressed to) is a 403.
//    A request with neither header (a script, a rig with its token, curl) goes on: browsers send
//    Origin on every cross-site state-changing request.
// 2. Content types: a body on a JSON route must be application/json (415 otherwise); the upload
//    routes (evidence, a build archive) take multipart/form-data, the one-click unsubscribe (RFC 8058) also a form.
// 3. Body size and time: a JSON body is read here, counting bytes as they arrive, and refused
//    with 413 past JSON_BODY_LIMIT (a declared Content-Length past it is refused before a byte is
//    read), and with 408 when it has not arrived in full within JSON_BODY_TIMEOUT_MS. The bytes
//    are handed to h3, so handlers read the body as usual. Uploads stream in their handler under
//    their own (larger) limit; here they get a declared-length check and an idle timeout: no
//    byte for UPLOAD_IDLE_TIMEOUT_MS and the connection is closed.
// A refusal of a large or unsized body closes the connection, so the rest is never waited for;
// a small one is drained after the answer, under the idle timeout.

/** The largest JSON body: a reading of 10,000 values is about 200 KB; this leaves room. */
export const JSON_BODY_LIMIT = 512 * 1024
export const JSON_BODY_TIMEOUT_MS = 15_000
export const UPLOAD_IDLE_TIMEOUT_MS = 25_000
/** Room for the multipart framing and the text fields around an uploaded file. */
const MULTIPART_SLACK = 64 * 1024

const CHANGING = new Set(['POST', 'PUT', 'PATCH', 'DELETE'])
// the evidence upload, and a build archive's import
const UPLOAD_ROUTE = /^\/api\/v1\/(?:builds\/[^/]+\/files|teams\/[^/]+\/import)\/?$/
const UNSUBSCRIBE_ROUTE = /^\/api\/unsubscribe\/?$/
const RawBody = Symbol.for('h3RawBody')

function refuse(event: H3Event, statusCode: number, message: string): never {
  const declared = declaredLength(event)
  if (declared === null || declared > JSON_BODY_LIMIT) {
    // a large (or unknown) body is not read: end the connection after the answer
    setResponseHeader(event, 'Connection', 'close')
  }
  else {
    // a small one is read and dropped after the answer, so the connection can serve again;
    // one that stalls is closed
    idleTimeout(event)
  }
  throw createError({ statusCode, message })
}

function originOf(url: string | undefined): string | null {
  if (!url) return null
  try {
    return new URL(url).origin
  }
  catch {
    return 'null'
  }
}

/** The origins this app answers as: the configured one and the one this request was sent to. */
function ownOrigins(event: H3Event): string[] {
  const config = useRuntimeConfig()
  const trustProxy = Boolean(config.auth?.trustProxy)
  const own = [originOf(config.appUrl)]
  const host = (trustProxy && getRequestHeader(event, 'x-forwarded-host')) || getRequestHeader(event, 'host')
  if (host) {
    const forwarded = trustProxy ? getRequestHeader(event, 'x-forwarded-proto')?.split(',')[0]?.trim() : undefined
    const encrypted = (event.node.req.socket as { encrypted?: boolean }).encrypted
    own.push(originOf(`${forwarded || (encrypted ? 'https' : 'http')}://${host}`))
  }
  return own.filter((o): o is string => !!o && o !== 'null')
}

function checkOrigin(event: H3Event, path: string) {
  // the signed link is the permission there, whoever posts it
  if (UNSUBSCRIBE_ROUTE.test(path)) return
  const origin = getRequestHeader(event, 'origin')
  const claimed = origin !== undefined ? (origin === 'null' ? 'null' : originOf(origin)) : originOf(getRequestHeader(event, 'referer'))
  if (claimed === null) return
  if (!ownOrigins(event).includes(claimed)) {
    refuse(event, 403, 'This request came from another site; Ratchet only takes changes from its own pages')
  }
}

function hasBody(event: H3Event): boolean {
  const length = getRequestHeader(event, 'content-length')
  if (length !== undefined) return Number(length) > 0 || !/^\d+$/.test(length.trim())
  return getRequestHeader(event, 'transfer-encoding') !== undefined
}

function mediaType(event: H3Event): string {
  return (getRequestHeader(event, 'content-type') ?? '').split(';')[0]!.trim().toLowerCase()
}

function declaredLength(event: H3Event): number | null {
  const length = getRequestHeader(event, 'content-length')
  if (length === undefined) return null
  const n = Number(length)
  return Number.isFinite(n) ? n : null
}

function readLimited(event: H3Event): Promise<Buffer> {
  const req = event.node.req
  return new Promise((resolve, reject) => {
    const chunks: Buffer[] = []
    let size = 0
    let done = false
    const finish = (err: Error | null, body?: Buffer) => {
      if (done) return
      done = true
      clearTimeout(timer)
      req.off('data', onData).off('end', onEnd).off('error', onError).off('aborted', onAborted)
      if (err) {
        req.pause()
        reject(err)
      }
      else resolve(body!)
    }
    const tooLarge = () => {
      setResponseHeader(event, 'Connection', 'close')
      return createError({ statusCode: 413, message: `The request body is larger than the limit of ${JSON_BODY_LIMIT / 1024} KB` })
    }
    const onData = (chunk: Buffer) => {
      size += chunk.length
      if (size > JSON_BODY_LIMIT) finish(tooLarge())
      else chunks.push(chunk)
    }
    const onEnd = () => finish(null, Buffer.concat(chunks))
    const onError = (err: Error) => finish(err)
    const onAborted = () => finish(createError({ statusCode: 400, message: 'The request body was cut off' }))
    const timer = setTimeout(() => {
      setResponseHeader(event, 'Connection', 'close')
      finish(createError({ statusCode: 408, message: `The request body did not arrive within ${JSON_BODY_TIMEOUT_MS / 1000} s` }))
    }, JSON_BODY_TIMEOUT_MS)
    req.on('data', onData).on('end', onEnd).on('error', onError).on('aborted', onAborted)
  })
}

/** Closes a connection whose body stalls: no byte for UPLOAD_IDLE_TIMEOUT_MS. */
function idleTimeout(event: H3Event) {
  const req = event.node.req
  const socket = req.socket
  req.setTimeout(UPLOAD_IDLE_TIMEOUT_MS, () => socket.destroy())
  req.once('end', () => socket.setTimeout(0))
}

export default defineEventHandler(async (event) => {
  if (!CHANGING.has(event.method)) return
  const path = event.path.split('?')[0]!
  checkOrigin(event, path)
  if (!hasBody(event)) return

  const type = mediaType(event)
  const declared = declaredLength(event)
  if (UPLOAD_ROUTE.test(path)) {
    if (type !== 'multipart/form-data') refuse(event, 415, 'Send the file as multipart/form-data, in a field named "file"')
    const maxBytes = Number(useRuntimeConfig().files?.maxBytes) || 0
    if (maxBytes > 0 && declared !== null && declared > maxBytes + MULTIPART_SLACK) {
      refuse(event, 413, `The file is larger than the limit of ${formatBytes(maxBytes)}`)
    }
    idleTimeout(event)
    return
  }
  const allowed = UNSUBSCRIBE_ROUTE.test(path) ? ['application/json', 'application/x-www-form-urlencoded'] : ['application/json']
  if (!allowed.includes(type)) refuse(event, 415, `Send the body as ${allowed.join(' or ')}`)
  if (declared !== null && declared > JSON_BODY_LIMIT) {
    refuse(event, 413, `The request body is larger than the limit of ${JSON_BODY_LIMIT / 1024} KB`)
  }
  const body = await readLimited(event)
  ;(event.node.req as unknown as Record<symbol, unknown>)[RawBody] = Promise.resolve(body)
})
