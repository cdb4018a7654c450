import type { IncomingHttpHeaders, IncomingMessage } from 'node:http'
import type { Readable } from 'node:stream'
import busboy from 'busboy'
import { createError } from 'h3'

// A multipart/form-data body read as it streams in (busboy): the text fields, and one file part
// handed to the caller as a stream (uploads.ts stores it).

/** Stream buffers of 1 MiB: far fewer hand-offs than the 16–64 KiB defaults, still bounded. */
export const UPLOAD_CHUNK = 1024 * 1024
const CHUNK = UPLOAD_CHUNK
/** After a failure, how long the answer waits for the store to give up the partial file. */
const GIVE_UP_MS = 5000

export interface Received { filename: string, bytes: number, sha256: string, head: Buffer }

/**
 * Parses a multipart body from a request's stream and headers. `onFile` consumes the part named
 * "file" (only one is allowed) and gets the text fields sent before it. On any failure the rest
 * of the body is read and dropped, so the client gets the answer.
 */
export function readMultipart<T = Received>(req: IncomingMessage, headers: IncomingHttpHeaders, onFile: (stream: Readable, filename: string, fieldsBefore: Record<string, string>, signal: AbortSignal) => Promise<T>) {
  return new Promise<{ fields: Record<string, string>, file: T | null }>((resolve, reject) => {
    let parser: busboy.Busboy
    try {
      parser = busboy({ headers, defParamCharset: 'utf8', highWaterMark: CHUNK, fileHwm: CHUNK, limits: { files: 1, fields: 8, parts: 10, fieldSize: 1024, headerPairs: 20 } })
    }
    catch {
      reject(createError({ statusCode: 400, message: 'The multipart body has no boundary; send it as multipart/form-data' }))
      return
    }
    const fields: Record<string, string> = {}
    let pending: Promise<T> | null = null
    let current: Readable | null = null
    let settled = false
    // tells `onFile` to stop writing (it may still be checking the fields when the body fails)
    const abort = new AbortController()
    const fail = (err: unknown) => {
      if (settled) return
      settled = true
      req.unpipe(parser)
      req.resume()
      abort.abort(err)
      current?.destroy(err as Error)
      // answer once the file's bytes are written or given up, so the caller can remove them; a
      // store that does not give up in time is left to the sweep rather than hold the answer
      let timer: NodeJS.Timeout | undefined
      const givenUp = new Promise<void>((done) => { timer = setTimeout(done, GIVE_UP_MS) })
      Promise.race([Promise.allSettled([pending]), givenUp]).then(() => {
        clearTimeout(timer)
        reject(err)
      })
    }
    parser.on('file', (name, stream, info) => {
      // its errors reach the caller through `pending` and `fail`; without a listener, a stream
      // destroyed by `fail` before anyone read it would throw outside any request
      stream.on('error', () => {})
      // parts after a failure (busboy finishes the chunk it was given) are dropped unread
      if (settled) {
        stream.resume()
        return
      }
      if (name !== 'file') {
        stream.resume()
        fail(createError({ statusCode: 400, message: `Send the file in a field named "file" (got "${name}")` }))
        return
      }
      current = stream
      pending = onFile(stream, info.filename, { ...fields }, abort.signal)
      pending.catch(fail)
    })
    parser.on('field', (name, value, info) => {
      if (settled) return
      if (info.nameTruncated || info.valueTruncated) fail(createError({ statusCode: 400, message: `The field "${name.slice(0, 40)}" is too long` }))
      else fields[name] = value
    })
    parser.on('filesLimit', () => fail(createError({ statusCode: 400, message: 'Send one file per request' })))
    parser.on('fieldsLimit', () => fail(createError({ statusCode: 400, message: 'Too many fields: send file, and optionally revision, reading and finding' })))
    parser.on('partsLimit', () => fail(createError({ statusCode: 400, message: 'Too many parts in the multipart body' })))
    parser.on('error', () => fail(createError({ statusCode: 400, message: 'The multipart body is malformed' })))
    parser.on('close', () => {
      if (settled) return
      Promise.resolve(pending).then((file) => {
        if (settled) return
        settled = true
        resolve({ fields, file })
      }, fail)
    })
    req.on('close', () => {
      if (!req.complete) fail(createError({ statusCode: 400, message: 'The upload was interrupted' }))
    })
    req.pipe(parser)
  })
}
