// The Range request header (RFC 9110 §14), for video seeking and resumed downloads.

export interface ByteRange {
  /** first byte, inclusive */
  start: number
  /** last byte, inclusive */
  end: number
}

/**
 * What to send for a `Range` header on a representation of `size` bytes:
 * - `null`: ignore the header and send everything (absent, malformed, another unit, or several
 *   ranges: a server may always answer a range request with the whole representation);
 * - `'unsatisfiable'`: 416 (every range starts past the end, or the file is empty);
 * - a range, with its end clamped to the last byte.
 */
export function parseRange(header: string | null | undefined, size: number): ByteRange | 'unsatisfiable' | null {
  if (!header) return null
  const m = /^\s*bytes\s*=\s*(.+)$/i.exec(header)
  if (!m) return null
  const specs = m[1]!.split(',').map(s => s.trim()).filter(Boolean)
  if (specs.length !== 1) return null
  const spec = /^(\d*)\s*-\s*(\d*)$/.exec(specs[0]!)
  if (!spec) return null
  const [, a, b] = spec
  if (a === '' && b === '') return null
  if (a === '') {
    // a suffix: the last N bytes
    const n = Number(b)
    if (n === 0 || size === 0) return 'unsatisfiable'
    return { start: Math.max(0, size - n), end: size - 1 }
  }
  const start = Number(a)
  const end = b === '' ? size - 1 : Number(b)
  if (b !== '' && end < start) return null
  if (start >= size) return 'unsatisfiable'
  return { start, end: Math.min(end, size - 1) }
}

/** Whether an If-None-Match header matches the strong ETag (weak comparison, RFC 9110 §13.1.2). */
export function etagMatches(header: string | null | undefined, etag: string): boolean {
  if (!header) return false
  if (header.trim() === '*') return true
  const bare = etag.replace(/^W\//, '')
  return header.split(',').some(t => t.trim().replace(/^W\//, '') === bare)
}
