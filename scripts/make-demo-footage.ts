// Makes the demo's test footage, seeds/assets/trailhopper-dyno-r5.webm (invented: a drawn roller
// dyno run), once; the seed ships the result. Chromium's MediaRecorder records a canvas as VP8
// WebM, but live-style: no duration and no index, so a browser can't seek in it. The file is
// rewritten here with sizes, a duration and cue points (one per cluster that starts on a
// keyframe), which makes it seekable over range requests.
//   npx tsx scripts/make-demo-footage.ts
import { writeFileSync } from 'node:fs'
import { chromium } from 'playwright-core'

const OUT = new URL('../seeds/assets/trailhopper-dyno-r5.webm', import.meta.url)

async function record(): Promise<Buffer> {
  const browser = await chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  })
  try {
    const page = await browser.newPage()
    await page.setContent('<canvas id="c" width="320" height="180"></canvas>')
    // passed as source text: the page runs it as it is, without the compiler's helpers
    const b64 = await page.evaluate<string>(`(async () => {
      const c = document.getElementById('c')
      const g = c.getContext('2d')
      const rec = new MediaRecorder(c.captureStream(24), { mimeType: 'video/webm;codecs=vp8', videoBitsPerSecond: 140_000 })
      const chunks = []
      rec.ondataavailable = e => chunks.push(e.data)
      const stopped = new Promise(r => (rec.onstop = r))
      const t0 = performance.now()
      const draw = () => {
        const t = (performance.now() - t0) / 1000
        const speed = 18 + 6.4 * Math.min(1, t / 3.2)
        g.fillStyle = '#1d1c1a'
        g.fillRect(0, 0, 320, 180)
        // the roller and the wheel on it, spokes turning with the speed
        g.strokeStyle = '#5e5b52'
        g.lineWidth = 10
        g.beginPath()
        g.arc(95, 168, 30, Math.PI, 2 * Math.PI)
        g.stroke()
        g.strokeStyle = '#66d4c3'
        g.lineWidth = 6
        g.beginPath()
        g.arc(95, 88, 56, 0, Math.PI * 2)
        g.stroke()
        g.lineWidth = 2
        for (let i = 0; i < 8; i++) {
          const a = (t * speed / 3.6) * 2 + i * Math.PI / 4
          g.beginPath()
          g.moveTo(95, 88)
          g.lineTo(95 + 53 * Math.cos(a), 88 + 53 * Math.sin(a))
          g.stroke()
        }
        g.fillStyle = '#eeede9'
        g.font = 'bold 28px sans-serif'
        g.fillText(\`\${speed.toFixed(1)} km/h\`, 172, 84)
        g.font = '12px sans-serif'
        g.fillText('Trailhopper R5 · roller dyno', 172, 108)
        g.fillText(\`t = \${t.toFixed(2)} s\`, 172, 126)
        g.fillStyle = '#c28a12'
        g.fillText('DEMO DATA', 10, 18)
        if (t < 4.2) requestAnimationFrame(draw)
        else rec.stop()
      }
      rec.start(1000)
      draw()
      await stopped
      const bytes = new Uint8Array(await new Blob(chunks).arrayBuffer())
      let s = ''
      for (const b of bytes) s += String.fromCharCode(b)
      return btoa(s)
    })()`)
    return Buffer.from(b64, 'base64')
  }
  finally {
    await browser.close()
  }
}

// ---- EBML (Matroska/WebM) ----

const ID = { Segment: 0x18538067, Info: 0x1549A966, TimecodeScale: 0x2AD7B1, Duration: 0x4489, Cluster: 0x1F43B675, Timecode: 0xE7, SimpleBlock: 0xA3, BlockGroup: 0xA0, Block: 0xA1, ReferenceBlock: 0xFB, Cues: 0x1C53BB6B, CuePoint: 0xBB, CueTime: 0xB3, CueTrackPositions: 0xB7, CueTrack: 0xF7, CueClusterPosition: 0xF1 }

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

function makeSeekable(raw: Buffer): Buffer {
  const top = children(raw, 0, raw.length)
  const header = top[0]!
  const segment = top.find(e => e.id === ID.Segment)!
  const clusterLike = new Set([ID.Cluster, ID.Cues, ID.Info, ID.Segment])
  const parts = children(raw, segment.dataStart, segment.end, clusterLike)
  const info = parts.find(e => e.id === ID.Info)!
  const others = parts.filter(e => e.id !== ID.Info && e.id !== ID.Cluster && e.id !== ID.Cues)

  const times: number[] = []
  const clusters = parts.filter(e => e.id === ID.Cluster).map((c) => {
    const kids = children(raw, c.dataStart, c.end, new Set([ID.Cluster]))
    const time = readUint(raw, kids.find(k => k.id === ID.Timecode)!)
    let last = time
    let keyStart = false
    kids.forEach((k, i) => {
      let block: El | undefined = k.id === ID.SimpleBlock ? k : undefined
      let key = false
      if (k.id === ID.BlockGroup) {
        const inner = children(raw, k.dataStart, k.end)
        block = inner.find(e => e.id === ID.Block)
        key = !inner.some(e => e.id === ID.ReferenceBlock)
      }
      if (!block) return
      const track = vint(raw, block.dataStart, false)
      const rel = raw.readInt16BE(block.dataStart + track.length)
      if (k.id === ID.SimpleBlock) key = (raw[block.dataStart + track.length + 2]! & 0x80) !== 0
      last = Math.max(last, time + rel)
      times.push(time + rel)
      if (i <= 1 && key) keyStart = true
    })
    return { data: Buffer.concat(kids.map(k => raw.subarray(k.start, k.end))), time, last, keyStart }
  })
  // the last frame lasts as long as the average one
  times.sort((a, b) => a - b)
  const frame = times.length > 1 ? (times.at(-1)! - times[0]!) / (times.length - 1) : 42

  const infoKids = children(raw, info.dataStart, info.end).filter(e => e.id !== ID.Duration)
  const duration = (times.at(-1) ?? 0) + frame
  const newInfo = element(ID.Info, Buffer.concat([...infoKids.map(k => raw.subarray(k.start, k.end)), element(ID.Duration, float64(duration))]))
  const kept = others.map(e => raw.subarray(e.start, e.end))
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

const raw = await record()
const fixed = makeSeekable(raw)
writeFileSync(OUT, fixed)
console.log(`footage: ${raw.length} bytes recorded, ${fixed.length} bytes written to ${OUT.pathname.split('/').slice(-3).join('/')}`)
