import type { Readable } from 'node:stream'
import { pipeline } from 'node:stream/promises'
import type { H3Event } from 'h3'
import { etagMatches, parseRange } from '#shared/utils/byteRanges'
import { deliveryOf } from '#shared/utils/contentTypes'
import { contentDisposition } from '#shared/utils/fileNames'
import type { FileRow } from '../db/tables'

// Answers that are HTTP and nothing else: a stored file sent with its headers and byte ranges.

const SANDBOX_POLICY = 'default-src \'none\'; img-src \'self\'; media-src \'self\'; style-src \'unsafe-inline\'; sandbox'

/**
 * Sends a stored file: ETag from its sha256 (If-None-Match → 304), Range → 206 or 416, a safe
 * Content-Disposition, nosniff, and markup never inline. The bytes stream from storage.
 */
export async function sendStoredFile(event: H3Event, file: FileRow) {
  const size = Number(file.size)
  const etag = `"${file.sha256}"`
  const res = event.node.res
  const rangeHeader = getRequestHeader(event, 'range')
  const ifRange = getRequestHeader(event, 'if-range')
  const range = ifRange && ifRange.trim() !== etag ? null : parseRange(rangeHeader, size)
  if (range === 'unsatisfiable') {
    setResponseHeader(event, 'Content-Range', `bytes */${size}`)
    throw createError({ statusCode: 416, message: `The range "${String(rangeHeader).slice(0, 60)}" is outside the file (${size} bytes)` })
  }
  const download = ['1', 'true'].includes(String(getQuery(event).download ?? ''))
  const delivery = deliveryOf(file.content_type, file.name, download)
  setResponseHeaders(event, {
    'ETag': etag,
    'Last-Modified': new Date(file.created_at).toUTCString(),
    'Cache-Control': 'private, no-cache',
    'Accept-Ranges': 'bytes',
    'X-Content-Type-Options': 'nosniff',
    'Cross-Origin-Resource-Policy': 'same-origin',
    'Content-Type': delivery.contentType,
    'Content-Disposition': contentDisposition(delivery.disposition, file.name),
    ...(delivery.sandbox ? { 'Content-Security-Policy': SANDBOX_POLICY } : {}),
  })
  if (etagMatches(getRequestHeader(event, 'if-none-match'), etag)) {
    res.statusCode = 304
    res.end()
    return
  }
  let body: Readable
  try {
    body = await useFileStore().get(file.storage_key, range ?? undefined)
  }
  catch (err) {
    console.error(`files: the bytes of ${file.id} (${file.storage_key}) can't be read:`, err)
    res.removeHeader('Content-Disposition')
    throw createError({ statusCode: 503, message: 'The file’s bytes can’t be read from storage right now' })
  }
  if (range) {
    res.statusCode = 206
    res.setHeader('Content-Range', `bytes ${range.start}-${range.end}/${size}`)
    res.setHeader('Content-Length', String(range.end - range.start + 1))
  }
  else {
    res.statusCode = 200
    res.setHeader('Content-Length', String(size))
  }
  if (event.method === 'HEAD') {
    body.destroy()
    res.end()
    return
  }
  // a client that goes away mid-download ends the pipeline; nothing to report
  await pipeline(body, res).catch(() => {})
}
