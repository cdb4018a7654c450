// The measuring screen's geometry and file reading: positions clicked on frames of footage turned
// into distances along the line of motion, the parallax check of the scale object, where a click
// lands in the video's own pixels, and the frame rate a video container states
// (docs/computation.md §Track readings).

export interface Px { x: number, y: number }
export interface Mark extends Px { frame: number }
export interface ScaleBar { a: Px, b: Px, /** its length in the scale unit */ length: number }

const dist = (p: Px, q: Px) => Math.hypot(q.x - p.x, q.y - p.y)

/**
 * The positions along the path, in the scale's unit: each mark projected onto the line from the
 * first mark to the last (by frame), measured from the first mark; so a mark a pixel or two off the
 * line doesn't add its sideways error to the distance. `offPath` is each mark's distance from that
 * line, in pixels. Marks come back in frame order. With fewer than two marks, or the first and the
 * last mark on the same pixel, there is no direction: every x is 0.
 */
export function projectMarks(marks: readonly Mark[], scale: ScaleBar): { frame: number, x: number, offPath: number }[] {
  const sorted = [...marks].sort((m, n) => m.frame - n.frame)
  const first = sorted[0]
  const last = sorted[sorted.length - 1]
  const d = dist(scale.a, scale.b)
  if (!first || !last || !(d > 0)) return sorted.map(m => ({ frame: m.frame, x: 0, offPath: 0 }))
  const len = dist(first, last)
  if (!(len > 0)) return sorted.map(m => ({ frame: m.frame, x: 0, offPath: 0 }))
  const ux = (last.x - first.x) / len
  const uy = (last.y - first.y) / len
  const perUnit = scale.length / d
  return sorted.map((m) => {
    const dx = m.x - first.x
    const dy = m.y - first.y
    return { frame: m.frame, x: (dx * ux + dy * uy) * perUnit, offPath: Math.abs(dx * uy - dy * ux) }
  })
}

/**
 * The parallax check: the scale object only gives the object's scale when it is at the object's
 * distance from the camera, so it should lie on or beside the path. The rule (common practice, no
 * source): warn when the scale bar's midpoint is farther from the path line (through the first and
 * last marks) than the bar is long. Null when there is nothing to check yet.
 */
export function parallaxCheck(marks: readonly Mark[], scale: { a: Px, b: Px }): { distancePx: number, scalePx: number, far: boolean } | null {
  const sorted = [...marks].sort((m, n) => m.frame - n.frame)
  const first = sorted[0]
  const last = sorted[sorted.length - 1]
  const scalePx = dist(scale.a, scale.b)
  if (!first || !last || !(scalePx > 0)) return null
  const len = dist(first, last)
  if (!(len > 0)) return null
  const mid = { x: (scale.a.x + scale.b.x) / 2, y: (scale.a.y + scale.b.y) / 2 }
  const distancePx = Math.abs((mid.x - first.x) * (last.y - first.y) - (mid.y - first.y) * (last.x - first.x)) / len
  return { distancePx, scalePx, far: distancePx > scalePx }
}

/**
 * Where a point of the page (clientX/Y) falls in the video's own pixels, for an element box showing
 * the whole picture scaled to fit (object-fit: contain, centred). Null outside the picture.
 */
export function clientToVideo(box: { left: number, top: number, width: number, height: number }, video: { width: number, height: number }, client: { x: number, y: number }): Px | null {
  if (!(box.width > 0 && box.height > 0 && video.width > 0 && video.height > 0)) return null
  const k = Math.min(box.width / video.width, box.height / video.height)
  const left = box.left + (box.width - video.width * k) / 2
  const top = box.top + (box.height - video.height * k) / 2
  const x = (client.x - left) / k
  const y = (client.y - top) / k
  if (x < 0 || y < 0 || x > video.width || y > video.height) return null
  return { x: Math.min(video.width - 1, Math.floor(x)), y: Math.min(video.height - 1, Math.floor(y)) }
}

/** The time the middle of a frame is shown at: seek there, not to the frame's edge. */
export const frameTime = (frame: number, fps: number) => (frame + 0.5) / fps

/** How many whole frames a video of `duration` seconds holds at `fps`. */
export function frameCount(duration: number, fps: number): number {
  if (!(duration > 0) || !Number.isFinite(duration) || !(fps > 0)) return 0
  return Math.max(1, Math.floor(duration * fps + 1e-6))
}

export const MIN_FPS = 1
export const MAX_FPS = 100_000

/** A typed frame rate: the message when it can't be used, else ''. */
export function fpsProblem(fps: number | null): string {
  if (fps === null) return 'Enter the frame rate'
  if (!Number.isFinite(fps)) return 'The frame rate is a number, e.g. 240'
  if (fps < MIN_FPS || fps > MAX_FPS) return `The frame rate is between ${MIN_FPS} and ${MAX_FPS.toLocaleString('en')} frames per second`
  return ''
}

/** What the container says about the frame rate. */
export interface StatedRate {
  fps: number | null
  /** where it came from, or why there is none, in words for the page */
  source: string
}

type Reader = (start: number, end: number) => Promise<Uint8Array>

const HEAD = 64 * 1024

/**
 * The frame rate a video file states, read from its first bytes (and, for an MP4 whose index sits
 * after its data, the index): WebM/Matroska's DefaultDuration of the video track (RFC 9559 §5.1.4.1.28.4
 * ff.), or an MP4's video track time scale over its sample duration (ISO/IEC 14496-12 `mdhd`, `stts`).
 * `read(start, end)` gives bytes [start, end) of a file of `size` bytes.
 */
export async function statedFrameRate(read: Reader, size: number): Promise<StatedRate> {
  const head = await read(0, Math.min(size, HEAD))
  if (head[0] === 0x1A && head[1] === 0x45 && head[2] === 0xDF && head[3] === 0xA3) {
    const ns = webmDefaultDuration(head)
    return ns
      ? { fps: round(1e9 / ns), source: 'read from the file (the WebM video track’s frame duration)' }
      : { fps: null, source: 'this WebM file doesn’t state a frame duration (recorders that write as they go often don’t)' }
  }
  if (ascii(head, 4, 8) === 'ftyp') {
    const moov = await mp4Moov(read, head, size)
    if (!moov) return { fps: null, source: 'no index (moov) was found in this MP4 file' }
    const rate = mp4VideoRate(moov)
    if (!rate) return { fps: null, source: 'this MP4 file’s video track states no sample durations' }
    return rate.variable
      ? { fps: round(rate.fps), source: 'the MP4 file’s frames have varying durations: this is their average, and the frames are not evenly spaced' }
      : { fps: round(rate.fps), source: 'read from the file (the MP4 video track’s time scale and frame duration)' }
  }
  return { fps: null, source: 'Ratchet reads the frame rate of WebM and MP4 files only' }
}

const round = (x: number) => Math.round(x * 1000) / 1000
const ascii = (b: Uint8Array, from: number, to: number) => String.fromCharCode(...b.subarray(from, to))

// ---- WebM / Matroska (EBML) ----

function vint(b: Uint8Array, at: number, keepMarker: boolean): { value: number, length: number, unknown: boolean } | null {
  const first = b[at]
  if (first === undefined || first === 0) return null
  let length = 1
  while (!(first & (0x80 >> (length - 1)))) length++
  if (at + length > b.length) return null
  let value = keepMarker ? first : first & (0xFF >> length)
  let allOnes = value === (0xFF >> length)
  for (let i = 1; i < length; i++) {
    value = value * 256 + b[at + i]!
    if (b[at + i] !== 0xFF) allOnes = false
  }
  return { value, length, unknown: !keepMarker && allOnes }
}

const EBML = { Segment: 0x18538067, Tracks: 0x1654AE6B, TrackEntry: 0xAE, TrackType: 0x83, DefaultDuration: 0x23E383, Cluster: 0x1F43B675 }

/** The elements from `from` to `to`, as far as the bytes go; an element of unknown size runs to `to`. */
function ebmlChildren(b: Uint8Array, from: number, to: number): { id: number, start: number, end: number }[] {
  const out: { id: number, start: number, end: number }[] = []
  let at = from
  while (at < to) {
    const id = vint(b, at, true)
    if (!id) break
    const size = vint(b, at + id.length, false)
    if (!size) break
    const start = at + id.length + size.length
    const end = size.unknown ? to : start + size.value
    out.push({ id: id.value, start, end: Math.min(end, to) })
    if (id.value === EBML.Cluster) break
    at = end
  }
  return out
}

function ebmlUint(b: Uint8Array, el: { start: number, end: number }): number {
  let v = 0
  for (let i = el.start; i < el.end; i++) v = v * 256 + b[i]!
  return v
}

/** The video track's DefaultDuration in nanoseconds, when the head of the file has it. */
export function webmDefaultDuration(b: Uint8Array): number | null {
  const segment = ebmlChildren(b, 0, b.length).find(e => e.id === EBML.Segment)
  if (!segment) return null
  const tracks = ebmlChildren(b, segment.start, segment.end).find(e => e.id === EBML.Tracks)
  if (!tracks) return null
  for (const entry of ebmlChildren(b, tracks.start, tracks.end).filter(e => e.id === EBML.TrackEntry)) {
    const kids = ebmlChildren(b, entry.start, entry.end)
    const type = kids.find(k => k.id === EBML.TrackType)
    const duration = kids.find(k => k.id === EBML.DefaultDuration)
    if (type && ebmlUint(b, type) === 1 && duration) {
      const ns = ebmlUint(b, duration)
      return ns > 0 ? ns : null
    }
  }
  return null
}

// ---- MP4 (ISO base media file format) ----

interface Box { type: string, start: number, end: number, headerEnd: number }

function u32(b: Uint8Array, at: number): number {
  return ((b[at]! << 24) >>> 0) + (b[at + 1]! << 16) + (b[at + 2]! << 8) + b[at + 3]!
}

/** The boxes from `from` to `to`; a box that runs past the bytes is listed with its full end. */
function mp4Boxes(b: Uint8Array, from: number, to: number, base = 0): Box[] {
  const out: Box[] = []
  let at = from
  while (at + 8 <= Math.min(to, b.length)) {
    let size = u32(b, at)
    const type = ascii(b, at + 4, at + 8)
    let headerEnd = at + 8
    if (size === 1) {
      if (at + 16 > b.length) break
      size = u32(b, at + 8) * 2 ** 32 + u32(b, at + 12)
      headerEnd = at + 16
    }
    else if (size === 0) size = to - at
    if (size < headerEnd - at) break
    out.push({ type, start: at + base, end: at + size + base, headerEnd: headerEnd + base })
    at += size
  }
  return out
}

const MAX_MOOV = 8 * 1024 * 1024

async function mp4Moov(read: Reader, head: Uint8Array, size: number): Promise<Uint8Array | null> {
  // walk the top-level boxes, reading each header where the head doesn't reach
  let at = 0
  for (let i = 0; i < 64 && at + 8 <= size; i++) {
    const bytes = at + 16 <= head.length ? head.subarray(at, at + 16) : await read(at, Math.min(size, at + 16))
    const [box] = mp4Boxes(bytes, 0, size - at, at)
    if (!box) return null
    if (box.type === 'moov') {
      if (box.end - box.start > MAX_MOOV) return null
      return box.end <= head.length ? head.subarray(box.start, box.end) : await read(box.start, Math.min(size, box.end))
    }
    at = box.end
  }
  return null
}

/** The video track's frame rate from a `moov` box: its time scale over the sample durations. */
export function mp4VideoRate(moov: Uint8Array): { fps: number, variable: boolean } | null {
  const inside = (box: Box) => mp4Boxes(moov, box.headerEnd, box.end)
  const [root] = mp4Boxes(moov, 0, moov.length)
  if (!root || root.type !== 'moov') return null
  for (const trak of inside(root).filter(x => x.type === 'trak')) {
    const mdia = inside(trak).find(x => x.type === 'mdia')
    if (!mdia) continue
    const parts = inside(mdia)
    const hdlr = parts.find(x => x.type === 'hdlr')
    if (!hdlr || ascii(moov, hdlr.headerEnd + 8, hdlr.headerEnd + 12) !== 'vide') continue
    const mdhd = parts.find(x => x.type === 'mdhd')
    if (!mdhd) return null
    const version = moov[mdhd.headerEnd]
    const timescale = u32(moov, mdhd.headerEnd + (version === 1 ? 20 : 12))
    const minf = parts.find(x => x.type === 'minf')
    const stbl = minf && inside(minf).find(x => x.type === 'stbl')
    const stts = stbl && inside(stbl).find(x => x.type === 'stts')
    if (!stts || !(timescale > 0)) return null
    const entries = u32(moov, stts.headerEnd + 4)
    let samples = 0
    let duration = 0
    const deltas = new Set<number>()
    for (let i = 0; i < entries && stts.headerEnd + 16 + 8 * i <= stts.end; i++) {
      const count = u32(moov, stts.headerEnd + 8 + 8 * i)
      const delta = u32(moov, stts.headerEnd + 12 + 8 * i)
      if (!count) continue
      samples += count
      duration += count * delta
      deltas.add(delta)
    }
    if (!(samples > 0) || !(duration > 0)) return null
    return { fps: samples * timescale / duration, variable: deltas.size > 1 }
  }
  return null
}
