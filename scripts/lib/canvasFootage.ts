// Test footage drawn on a canvas in Chromium and recorded by its MediaRecorder as VP8 WebM, made
// seekable. Used by scripts/make-demo-footage.ts (the demo's dyno run) and by the measuring
// screen's browser test (a dot at a known speed). MediaRecorder writes live-style WebM: no
// duration and no index, so a browser can't seek in it; `makeSeekable` rewrites the file with
// sizes, a duration and cue points.
import type { Page } from 'playwright-core'

export interface CanvasFootage {
  width: number
  height: number
  fps: number
  frames: number
  bitsPerSecond: number
  /**
   * Source text of a function `(g, k, t) => void` that draws frame k (at t = k / fps seconds) on
   * the 2D context g. It runs in the page as it is, without the compiler's helpers.
   */
  draw: string
  /**
   * Milliseconds between pushed frames (default 1000/fps). Slower than real time gives a busy
   * machine's encoder time for every frame; retime the result with `makeSeekable`'s frameSeconds.
   */
  paceMs?: number
}

/**
 * Records `frames` frames, one pushed to the recorder every 1/fps seconds or `paceMs` (each drawn
 * just before, on a schedule that doesn't drift), and returns the WebM bytes as MediaRecorder wrote
 * them.
 */
export async function recordCanvas(page: Page, f: CanvasFootage): Promise<Buffer> {
  await page.setContent(`<canvas id="c" width="${f.width}" height="${f.height}"></canvas>`)
  const b64 = await page.evaluate<string>(`(async () => {
    const c = document.getElementById('c')
    const g = c.getContext('2d')
    const stream = c.captureStream(0)
    const track = stream.getVideoTracks()[0]
    const rec = new MediaRecorder(stream, { mimeType: 'video/webm;codecs=vp8', videoBitsPerSecond: ${f.bitsPerSecond} })
    const chunks = []
    rec.ondataavailable = e => chunks.push(e.data)
    const stopped = new Promise(r => (rec.onstop = r))
    const draw = ${f.draw}
    const fps = ${f.fps}
    const pace = ${f.paceMs ?? 1000 / f.fps}
    draw(g, 0, 0)
    rec.start(1000)
    const t0 = performance.now()
    for (let k = 0; k < ${f.frames}; k++) {
      const due = t0 + k * pace
      await new Promise(r => setTimeout(r, Math.max(0, due - performance.now())))
      draw(g, k, k / fps)
      track.requestFrame()
    }
    await new Promise(r => setTimeout(r, pace))
    rec.stop()
    await stopped
    const bytes = new Uint8Array(await new Blob(chunks).arrayBuffer())
    let s = ''
    for (const b of bytes) s += String.fromCharCode(b)
    return btoa(s)
  })()`)
  return Buffer.from(b64, 'base64')
}

// ---- EBML (Matroska/WebM) ----

const ID = { Segment: 0x18538067, Info: 0x1549A966, TimecodeScale: 0x2AD7B1, Duration: 0x4489, Cluster: 0x1F43B675, Timecode: 0xE7, SimpleBlock: 0xA3, BlockGroup: 0xA0, Block: 0xA1, ReferenceBlock: 0xFB, Cues: 0x1C53BB6B, CuePoint: 0xBB, CueTime: 0xB3, CueTrackPositions: 0xB7, CueTrack: 0xF7, CueClusterPosition: 0xF1, Tracks: 0x1654AE6B, TrackEntry: 0xAE, TrackType: 0x83, DefaultDuration: 0x23E383 }

interface El { id: number, start: number, dataStart: number, end: number }

function vint(buf: Buffer, at: number, keepMarker: boolean): { value: number, length: number, unknown: boolean } {
  const first = buf[at]!
  let length = 1
  while (length <= 8 && !(first & (0x80 >> (length - 1)))) length++
  let value = keepMarker ? first : first & (0xFF >> length)
  let allOnes = value === (0xFF >> length)
  for (let i = 1; i < length; i++) {
    value = value * 256 + buf[at + i]!
    if (buf[at + i] !== 0xFF) allOnes = false
  }
  return { value, length, unknown: !keepMarker && allOnes }
}

/** The elements between `from` and `to`; an element of unknown size ends where a sibling of `stopAt` starts. */
function children(buf: Buffer, from: number, to: number, stopAt: Set<number> = new Set()): El[] {
  const out: El[] = []
  let at = from
  while (at < to) {
    const id = vint(buf, at, true)
    const size = vint(buf, at + id.length, false)
    const dataStart = at + id.length + size.length
    let end = dataStart + size.value
    if (size.unknown) {
      end = dataStart
      while (end < to) {
        const next = vint(buf, end, true)
        if (stopAt.has(next.value)) break
        const s = vint(buf, end + next.length, false)
        end += next.length + s.length + s.value
      }
    }
    out.push({ id: id.value, start: at, dataStart, end: Math.min(end, to) })
    at = end
  }
  return out
}

function idBytes(id: number): Buffer {
  const bytes: number[] = []
  for (let v = id; v > 0; v = Math.floor(v / 256)) bytes.unshift(v & 0xFF)
  return Buffer.from(bytes)
}

function sizeBytes(n: number): Buffer {
  // 8-byte sizes everywhere: simple, and every size is known before it is written
  const b = Buffer.alloc(8)
  b.writeBigUInt64BE(BigInt(n) | (1n << 56n))
  return b
}

const element = (id: number, data: Buffer) => Buffer.concat([idBytes(id), sizeBytes(data.length), data])
const uint8 = (n: number) => {
  const b = Buffer.alloc(8)
  b.writeBigUInt64BE(BigInt(n))
  return b
}
const float64 = (x: number) => {
  const b = Buffer.alloc(8)
  b.writeDoubleBE(x)
  return b
}
const readUint = (buf: Buffer, el: El) => {
  let v = 0
  for (let i = el.dataStart; i < el.end; i++) v = v * 256 + buf[i]!
  return v
}

/**
 * The recording rewritten with sizes, a duration and cue points (one per cluster that starts on a
 * keyframe), which makes it seekable over range requests. With `frameSeconds`, every frame is also
 * retimed to exactly its index × frameSeconds: the recorder stamps frames with the time they were
 * captured, which wanders by a good part of a frame on a busy machine; footage whose frame k must be
 * found at time k/fps needs its frames on that grid. With `stateRate` as well, the video track states
 * that frame duration (DefaultDuration), as a camera's file would.
 */
export function makeSeekable(raw: Buffer, opts: { frameSeconds?: number, stateRate?: boolean } = {}): Buffer {
  const top = children(raw, 0, raw.length)
  const header = top[0]!
  const segment = top.find(e => e.id === ID.Segment)!
  const clusterLike = new Set([ID.Cluster, ID.Cues, ID.Info, ID.Segment])
  const parts = children(raw, segment.dataStart, segment.end, clusterLike)
  const info = parts.find(e => e.id === ID.Info)!
  const others = parts.filter(e => e.id !== ID.Info && e.id !== ID.Cluster && e.id !== ID.Cues)
  const scaleEl = children(raw, info.dataStart, info.end).find(e => e.id === ID.TimecodeScale)
  const nsPerTick = scaleEl ? readUint(raw, scaleEl) : 1_000_000
  const gridTime = (index: number) => Math.round(index * opts.frameSeconds! * 1e9 / nsPerTick)

  const blockOf = (k: El): { block: El, key: boolean } | null => {
    if (k.id === ID.SimpleBlock) {
      const track = vint(raw, k.dataStart, false)
      return { block: k, key: (raw[k.dataStart + track.length + 2]! & 0x80) !== 0 }
    }
    if (k.id !== ID.BlockGroup) return null
    const inner = children(raw, k.dataStart, k.end)
    const block = inner.find(e => e.id === ID.Block)
    return block ? { block, key: !inner.some(e => e.id === ID.ReferenceBlock) } : null
  }

  const times: number[] = []
  let index = 0
  const clusters = parts.filter(e => e.id === ID.Cluster).map((c) => {
    const kids = children(raw, c.dataStart, c.end, new Set([ID.Cluster]))
    const time = opts.frameSeconds ? gridTime(index) : readUint(raw, kids.find(k => k.id === ID.Timecode)!)
    let last = time
    let keyStart = false
    const data = kids.map((k, i) => {
      if (k.id === ID.Timecode) return opts.frameSeconds ? element(ID.Timecode, uint8(time)) : raw.subarray(k.start, k.end)
      const found = blockOf(k)
      if (!found) return raw.subarray(k.start, k.end)
      const copy = Buffer.from(raw.subarray(k.start, k.end))
      const at = found.block.dataStart + vint(raw, found.block.dataStart, false).length
      let rel = raw.readInt16BE(at)
      if (opts.frameSeconds) {
        rel = gridTime(index) - time
        copy.writeInt16BE(rel, at - k.start)
      }
      index++
      last = Math.max(last, time + rel)
      times.push(time + rel)
      if (i <= 1 && found.key) keyStart = true
      return copy
    })
    return { data: Buffer.concat(data), time, last, keyStart }
  })
  // the last frame lasts as long as the average one
  times.sort((a, b) => a - b)
  const frame = times.length > 1 ? (times.at(-1)! - times[0]!) / (times.length - 1) : 42

  const infoKids = children(raw, info.dataStart, info.end).filter(e => e.id !== ID.Duration)
  const duration = (times.at(-1) ?? 0) + frame
  const newInfo = element(ID.Info, Buffer.concat([...infoKids.map(k => raw.subarray(k.start, k.end)), element(ID.Duration, float64(duration))]))
  const kept = others.map(e => (e.id === ID.Tracks && opts.frameSeconds && opts.stateRate ? withFrameDuration(raw, e, opts.frameSeconds) : raw.subarray(e.start, e.end)))
  const wrapped = clusters.map(c => element(ID.Cluster, c.data))

  // cue points take fixed-size numbers, so the size of the Cues doesn't depend on the positions
  const cueFor = (time: number, position: number) => element(ID.CuePoint, Buffer.concat([
    element(ID.CueTime, uint8(time)),
    element(ID.CueTrackPositions, Buffer.concat([element(ID.CueTrack, uint8(1)), element(ID.CueClusterPosition, uint8(position))])),
  ]))
  const cued = clusters.map((c, i) => ({ c, i })).filter(x => x.c.keyStart || x.i === 0)
  const cuesSize = element(ID.Cues, Buffer.concat(cued.map(() => cueFor(0, 0)))).length
  let position = newInfo.length + kept.reduce((s, b) => s + b.length, 0) + cuesSize
  const positions = wrapped.map((w) => {
    const p = position
    position += w.length
    return p
  })
  const cues = element(ID.Cues, Buffer.concat(cued.map(x => cueFor(x.c.time, positions[x.i]!))))
  const body = Buffer.concat([newInfo, ...kept, cues, ...wrapped])
  return Buffer.concat([raw.subarray(header.start, header.end), element(ID.Segment, body)])
}

/** The Tracks element with every video track's DefaultDuration set to `frameSeconds`. */
function withFrameDuration(raw: Buffer, tracks: El, frameSeconds: number): Buffer {
  const entries = children(raw, tracks.dataStart, tracks.end).map((entry) => {
    if (entry.id !== ID.TrackEntry) return raw.subarray(entry.start, entry.end)
    const kids = children(raw, entry.dataStart, entry.end)
    const type = kids.find(k => k.id === ID.TrackType)
    if (!type || readUint(raw, type) !== 1) return raw.subarray(entry.start, entry.end)
    const kept = kids.filter(k => k.id !== ID.DefaultDuration).map(k => raw.subarray(k.start, k.end))
    return element(ID.TrackEntry, Buffer.concat([...kept, element(ID.DefaultDuration, uint8(Math.round(frameSeconds * 1e9)))]))
  })
  return element(ID.Tracks, Buffer.concat(entries))
}
