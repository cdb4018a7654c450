import { extensionOf } from './fileNames'

// What an uploaded file is, judged from its first bytes (binary formats are recognised by their
// signature on the server; this module handles text), and how it may be served. Only formats a
// browser shows passively are served inline; markup and scripts are always a download.

export type FileKind = 'image' | 'video' | 'audio' | 'pdf' | 'text' | 'other'

export const FILE_KINDS: readonly FileKind[] = ['image', 'video', 'audio', 'pdf', 'text', 'other']

export const KIND_LABELS: Record<FileKind, string> = {
  image: 'Photos and images',
  video: 'Video',
  audio: 'Audio',
  pdf: 'PDF',
  text: 'Text and CSV',
  other: 'Other',
}

/** Types shown in the browser when opened (passive content only). */
const INLINE = new Set([
  'image/png', 'image/jpeg', 'image/gif', 'image/webp', 'image/avif', 'image/bmp',
  'video/mp4', 'video/webm', 'video/ogg', 'video/quicktime',
  'audio/mpeg', 'audio/ogg', 'audio/wav', 'audio/x-wav', 'audio/flac', 'audio/x-flac', 'audio/mp4', 'audio/aac', 'audio/webm',
  'application/pdf',
  'text/plain', 'text/csv',
])

/** Markup and code a browser would run or render actively. */
const ACTIVE = /html|xml|svg|script|javascript|ecmascript|x-sh\b|x-shockwave|x-msdownload|wasm/i
const ACTIVE_EXTENSIONS = new Set(['html', 'htm', 'xhtml', 'shtml', 'svg', 'svgz', 'xml', 'xsl', 'xslt', 'js', 'mjs', 'cjs', 'hta', 'swf'])

const TEXT_TYPES: Record<string, string> = {
  csv: 'text/csv',
  tsv: 'text/csv',
  json: 'application/json',
}

export function kindOf(contentType: string): FileKind {
  const t = contentType.toLowerCase()
  if (ACTIVE.test(t)) return 'other'
  if (t.startsWith('image/')) return 'image'
  if (t.startsWith('video/')) return 'video'
  if (t.startsWith('audio/')) return 'audio'
  if (t === 'application/pdf') return 'pdf'
  if (t.startsWith('text/') || t === 'application/json') return 'text'
  return 'other'
}

export function isActiveType(contentType: string): boolean {
  return ACTIVE.test(contentType)
}

// eslint-disable-next-line no-control-regex
const BINARY_CONTROL = /[\u0000-\u0008\u000E-\u001A\u001C-\u001F]/

/**
 * The type of a file no binary signature matched, from its first bytes and its name: markup
 * (HTML, SVG, XML) by its opening tags or its extension, other text by extension (CSV, JSON,
 * else plain text), and `application/octet-stream` for anything with binary control bytes.
 * `head` is the start of the file; a multi-byte character cut at its end is allowed.
 */
export function sniffTextType(head: Uint8Array, name: string): string {
  let text: string
  const body = head[0] === 0xEF && head[1] === 0xBB && head[2] === 0xBF ? head.subarray(3) : head
  try {
    // the last character may be cut by the sample's end
    text = new TextDecoder('utf-8', { fatal: true }).decode(trimPartialUtf8(body))
  }
  catch {
    // not UTF-8: accept single-byte text (Latin-1 exports of older instruments)
    text = Array.from(body, b => String.fromCharCode(b)).join('')
  }
  if (BINARY_CONTROL.test(text)) return 'application/octet-stream'
  const ext = extensionOf(name)
  const lower = text.slice(0, 4096).toLowerCase()
  const start = lower.replace(/^(\s|<!--[\s\S]*?-->)*/, '')
  if (/<svg[\s>]/.test(lower) || ext === 'svg' || ext === 'svgz') return 'image/svg+xml'
  if (/^<!doctype\s+html|^<(html|head|body|script|iframe|frameset|object|embed)[\s>]/.test(start) || /<(script|iframe|html)[\s>]/.test(lower)) return 'text/html'
  if (start.startsWith('<?xml') || ['xml', 'xsl', 'xslt'].includes(ext)) return 'application/xml'
  if (['html', 'htm', 'xhtml', 'shtml', 'hta'].includes(ext)) return 'text/html'
  if (['js', 'mjs', 'cjs'].includes(ext)) return 'text/javascript'
  return TEXT_TYPES[ext] ?? 'text/plain'
}

function trimPartialUtf8(b: Uint8Array): Uint8Array {
  // step back over continuation bytes to the start of the last character; drop it if incomplete
  let i = b.length - 1
  let back = 0
  while (i >= 0 && back < 3 && (b[i]! & 0xC0) === 0x80) {
    i--
    back++
  }
  if (i < 0) return b
  const lead = b[i]!
  const need = lead >= 0xF0 ? 3 : lead >= 0xE0 ? 2 : lead >= 0xC0 ? 1 : 0
  return need > back ? b.subarray(0, i) : b
}

export interface Delivery {
  disposition: 'inline' | 'attachment'
  /** the Content-Type to send */
  contentType: string
  /** send a Content-Security-Policy that sandboxes the response as a document */
  sandbox: boolean
}

/**
 * How to serve a stored file: passive formats inline (text with its charset), everything else
 * as a download; markup and scripts as opaque bytes, sandboxed, whatever the caller asks.
 */
export function deliveryOf(contentType: string, name: string, download = false): Delivery {
  const t = contentType.toLowerCase()
  if (ACTIVE.test(t) || ACTIVE_EXTENSIONS.has(extensionOf(name))) {
    return { disposition: 'attachment', contentType: 'application/octet-stream', sandbox: true }
  }
  const served = t.startsWith('text/') ? `${t}; charset=utf-8` : t
  const inline = INLINE.has(t) && !download
  // a PDF viewer refuses to run in a sandboxed document; PDFs keep their own viewer's rules
  return { disposition: inline ? 'inline' : 'attachment', contentType: served, sandbox: t !== 'application/pdf' }
}
