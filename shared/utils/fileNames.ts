// File names as people see them. The name a client sends is only ever shown and offered back
// on download; the bytes are stored under a key the server makes up. Still, the shown name is
// cleaned: no directories, no control or direction-changing characters, nothing a file system
// refuses.

const MAX_NAME = 200
const FALLBACK = 'file'

// C0 and C1 controls, DEL, and the bidirectional overrides/isolates that can disguise an
// extension ("photo\u202Egpj.exe" shows as "photoexe.jpg"), zero-width and BOM characters
// eslint-disable-next-line no-control-regex
const INVISIBLE = /[\u0000-\u001F\u007F-\u009F\u200B-\u200F\u2028-\u202E\u2060-\u2069\uFEFF]/g
// characters Windows refuses in a file name
const RESERVED = /[<>:"|?*]/g
const WINDOWS_DEVICE = /^(con|prn|aux|nul|com\d|lpt\d)(\..*)?$/i

/**
 * The name to show for an uploaded file: its last path segment (either slash), without
 * invisible characters, Windows-reserved characters replaced, trimmed of spaces and trailing
 * dots, at most 200 characters (the extension kept). Never empty, never `.` or `..`.
 */
export function sanitizeFileName(raw: string | null | undefined): string {
  let name = String(raw ?? '').normalize('NFC').replace(INVISIBLE, '')
  name = name.split(/[/\\]/).pop() ?? ''
  name = name.replace(RESERVED, '_').trim().replace(/[. ]+$/, '')
  if (/^\.+$/.test(name) || name === '') return FALLBACK
  if (WINDOWS_DEVICE.test(name)) name = `_${name}`
  if (name.length > MAX_NAME) {
    const dot = name.lastIndexOf('.')
    const ext = dot > 0 && name.length - dot <= 16 ? name.slice(dot) : ''
    name = name.slice(0, MAX_NAME - ext.length).trimEnd() + ext
  }
  return name
}

/** The extension in lower case without its dot ("" when there is none). */
export function extensionOf(name: string): string {
  const dot = name.lastIndexOf('.')
  return dot > 0 ? name.slice(dot + 1).toLowerCase() : ''
}

/** RFC 8187 value characters: everything else is percent-encoded (UTF-8). */
function encodeExtValue(s: string): string {
  return encodeURIComponent(s).replace(/['()*]/g, c => `%${c.charCodeAt(0).toString(16).toUpperCase()}`)
}

/**
 * A Content-Disposition header (RFC 6266): a plain ASCII `filename` for old clients and, when
 * the name has other characters, `filename*` in UTF-8.
 */
export function contentDisposition(type: 'inline' | 'attachment', name: string): string {
  const clean = sanitizeFileName(name)
  const ascii = clean.normalize('NFKD').replace(/[\u0300-\u036F]/g, '').replace(/[^\x20-\x7E]/g, '_').replace(/["\\%]/g, '_')
  const plain = `${type}; filename="${ascii}"`
  return ascii === clean ? plain : `${plain}; filename*=UTF-8''${encodeExtValue(clean)}`
}

/** 1234567 → "1.2 MB" (decimal units, as disks and networks count). */
export function formatBytes(bytes: number | null | undefined): string {
  if (bytes == null || !Number.isFinite(bytes)) return '—'
  if (bytes < 1000) return `${bytes} B`
  const units = ['kB', 'MB', 'GB', 'TB']
  let v = bytes
  let i = -1
  while (v >= 1000 && i < units.length - 1) {
    v /= 1000
    i++
  }
  return `${v >= 100 ? v.toFixed(0) : v >= 10 ? v.toFixed(1) : v.toFixed(2)} ${units[i]}`
}
