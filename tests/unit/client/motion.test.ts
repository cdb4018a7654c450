import { describe, expect, it } from 'vitest'
import { clientToVideo, fpsProblem, frameCount, frameTime, mp4VideoRate, parallaxCheck, projectMarks, statedFrameRate, webmDefaultDuration } from '../../../utils/motion'

// The measuring screen's geometry, checked against values worked out by hand (plane geometry:
// the projection of a vector onto a unit vector, a point's distance from a line through two
// points), and the frame-rate readers against files built here byte by byte after the layouts of
// RFC 9559 (Matroska: EBML variable-size integers, Segment → Tracks → TrackEntry → TrackType,
// DefaultDuration in ns) and ISO/IEC 14496-12 (MP4 boxes: moov → trak → mdia → mdhd, hdlr,
// minf → stbl → stts).

describe('projectMarks: distance along the line from the first mark to the last', () => {
  const scale = { a: { x: 0, y: 0 }, b: { x: 200, y: 0 }, length: 100 } // 2 px per unit

  it('measures along a slanted path and ignores sideways error', () => {
    // path direction (3, 4)/5; a mark 10 px off the line to the side
    const marks = [
      { frame: 20, x: 130, y: 140 }, // last: 50 px along from the first
      { frame: 0, x: 100, y: 100 },
      { frame: 10, x: 115 + 8, y: 120 - 6 }, // 25 px along, plus (8, −6) = 10 px square to the path
    ]
    const out = projectMarks(marks, scale)
    expect(out.map(p => p.frame)).toEqual([0, 10, 20])
    expect(out[0]!.x).toBe(0)
    expect(out[1]!.x).toBeCloseTo(12.5, 12) // 25 px / 2 px per unit
    expect(out[2]!.x).toBeCloseTo(25, 12)
    expect(out[1]!.offPath).toBeCloseTo(10, 12)
    expect(out[2]!.offPath).toBeCloseTo(0, 12)
  })

  it('gives negative distances for a mark behind the first one, and 0 without a direction', () => {
    const out = projectMarks([{ frame: 0, x: 50, y: 0 }, { frame: 1, x: 40, y: 0 }, { frame: 2, x: 150, y: 0 }], scale)
    expect(out.map(p => p.x)).toEqual([0, -5, 50])
    expect(projectMarks([{ frame: 3, x: 5, y: 5 }], scale)).toEqual([{ frame: 3, x: 0, offPath: 0 }])
    expect(projectMarks([{ frame: 0, x: 5, y: 5 }, { frame: 1, x: 9, y: 5 }, { frame: 2, x: 5, y: 5 }], scale).map(p => p.x)).toEqual([0, 0, 0])
    expect(projectMarks([{ frame: 0, x: 5, y: 5 }, { frame: 1, x: 9, y: 5 }], { ...scale, b: scale.a }).map(p => p.x)).toEqual([0, 0])
  })
})

describe('parallaxCheck: the scale bar should lie by the path', () => {
  const marks = [{ frame: 0, x: 0, y: 100 }, { frame: 9, x: 300, y: 100 }]
  it('is quiet when the bar is closer to the path than its length, and warns past it', () => {
    expect(parallaxCheck(marks, { a: { x: 50, y: 150 }, b: { x: 150, y: 150 } })).toEqual({ distancePx: 50, scalePx: 100, far: false })
    expect(parallaxCheck(marks, { a: { x: 50, y: 200 }, b: { x: 150, y: 200 } })).toEqual({ distancePx: 100, scalePx: 100, far: false })
    expect(parallaxCheck(marks, { a: { x: 50, y: 260 }, b: { x: 110, y: 340 } })).toEqual({ distancePx: 200, scalePx: 100, far: true })
  })
  it('has nothing to say without a path or a bar', () => {
    expect(parallaxCheck(marks.slice(0, 1), { a: { x: 0, y: 0 }, b: { x: 1, y: 0 } })).toBeNull()
    expect(parallaxCheck(marks, { a: { x: 0, y: 0 }, b: { x: 0, y: 0 } })).toBeNull()
  })
})

describe('clientToVideo: a click in video pixels', () => {
  it('scales by the box, with the picture letterboxed as object-fit: contain does', () => {
    // 640×360 shown in a 320×180 box at (10, 20): 2 video px per css px
    expect(clientToVideo({ left: 10, top: 20, width: 320, height: 180 }, { width: 640, height: 360 }, { x: 110, y: 65 })).toEqual({ x: 200, y: 90 })
    // the same picture in a 320×280 box: 50 px bands above and below
    expect(clientToVideo({ left: 0, top: 0, width: 320, height: 280 }, { width: 640, height: 360 }, { x: 160, y: 140 })).toEqual({ x: 320, y: 180 })
    expect(clientToVideo({ left: 0, top: 0, width: 320, height: 280 }, { width: 640, height: 360 }, { x: 160, y: 20 })).toBeNull()
    expect(clientToVideo({ left: 0, top: 0, width: 320, height: 180 }, { width: 0, height: 0 }, { x: 1, y: 1 })).toBeNull()
  })
})

describe('frames and their times', () => {
  it('seeks to the middle of a frame and counts whole frames', () => {
    expect(frameTime(0, 240)).toBeCloseTo(1 / 480, 15)
    expect(frameTime(9, 30)).toBeCloseTo(9.5 / 30, 15)
    expect(frameCount(3, 30)).toBe(90)
    expect(frameCount(2.999, 30)).toBe(89)
    expect(frameCount(Number.POSITIVE_INFINITY, 30)).toBe(0)
  })
  it('refuses a frame rate it can’t use, with a message', () => {
    expect(fpsProblem(240)).toBe('')
    expect(fpsProblem(null)).toBe('Enter the frame rate')
    expect(fpsProblem(Number.NaN)).toContain('is a number')
    expect(fpsProblem(0)).toContain('between 1 and')
    expect(fpsProblem(1e6)).toContain('between 1 and')
  })
})

// ---- byte builders ----

const bytes = (...parts: (number[] | Uint8Array)[]) => Uint8Array.from(parts.flatMap(p => [...p]))
const be = (n: number, len: number) => Array.from({ length: len }, (_, i) => Math.floor(n / 256 ** (len - 1 - i)) % 256)
/** an EBML element: its ID bytes, a one-byte size (or 8 bytes of "unknown"), the data */
const el = (id: number[], data: Uint8Array | number[], unknown = false) => bytes(id, unknown ? [0x01, 0xFF, 0xFF, 0xFF, 0xFF, 0xFF, 0xFF, 0xFF] : [0x80 | data.length], data)
const EBML_HEADER = el([0x1A, 0x45, 0xDF, 0xA3], el([0x42, 0x82], [...'webm'].map(c => c.charCodeAt(0))))

function webm(opts: { ns?: number, audioFirst?: boolean, unknownSegment?: boolean }) {
  const video = el([0xAE], bytes(el([0xD7], [1]), el([0x83], [1]), opts.ns ? el([0x23, 0xE3, 0x83], be(opts.ns, 4)) : []))
  const audio = el([0xAE], bytes(el([0xD7], [2]), el([0x83], [2]), el([0x23, 0xE3, 0x83], be(20_000_000, 4))))
  const tracks = el([0x16, 0x54, 0xAE, 0x6B], opts.audioFirst ? bytes(audio, video) : video)
  const info = el([0x15, 0x49, 0xA9, 0x66], el([0x2A, 0xD7, 0xB1], be(1_000_000, 3)))
  const cluster = el([0x1F, 0x43, 0xB6, 0x75], el([0xE7], [0]), true)
  return bytes(EBML_HEADER, el([0x18, 0x53, 0x80, 0x67], bytes(info, tracks, cluster), opts.unknownSegment))
}

const box = (type: string, ...data: (number[] | Uint8Array)[]) => {
  const body = bytes(...data)
  return bytes(be(body.length + 8, 4), [...type].map(c => c.charCodeAt(0)), body)
}
function moov(opts: { timescale: number, stts: [number, number][], version1?: boolean, handler?: string }) {
  const mdhd = opts.version1
    ? box('mdhd', [1, 0, 0, 0], be(0, 8), be(0, 8), be(opts.timescale, 4), be(0, 8), [0, 0, 0, 0])
    : box('mdhd', [0, 0, 0, 0], be(0, 4), be(0, 4), be(opts.timescale, 4), be(0, 4), [0, 0, 0, 0])
  const hdlr = box('hdlr', [0, 0, 0, 0], be(0, 4), [...(opts.handler ?? 'vide')].map(c => c.charCodeAt(0)), be(0, 12), [0])
  const stts = box('stts', [0, 0, 0, 0], be(opts.stts.length, 4), ...opts.stts.map(([c, d]) => [...be(c, 4), ...be(d, 4)]))
  const soundTrak = box('trak', box('mdia', box('mdhd', [0, 0, 0, 0], be(0, 8), be(48000, 4), be(0, 8)), box('hdlr', [0, 0, 0, 0], be(0, 4), [...'soun'].map(c => c.charCodeAt(0)), be(0, 12), [0])))
  return box('moov', box('mvhd', be(0, 100)), soundTrak, box('trak', box('tkhd', be(0, 84)), box('mdia', mdhd, hdlr, box('minf', box('stbl', stts)))))
}
const ftyp = box('ftyp', [...'isom'].map(c => c.charCodeAt(0)), be(0, 4))

/** a reader over bytes in memory that records what was asked */
function reader(file: Uint8Array) {
  const asked: [number, number][] = []
  const read = async (start: number, end: number) => {
    asked.push([start, end])
    return file.subarray(start, end)
  }
  return { asked, read }
}

describe('the frame rate a WebM file states', () => {
  it('reads the video track’s DefaultDuration, past an audio track, in a Segment of unknown size', async () => {
    expect(webmDefaultDuration(webm({ ns: 33_333_333 }))).toBe(33_333_333)
    expect(webmDefaultDuration(webm({ ns: 4_166_667, audioFirst: true, unknownSegment: true }))).toBe(4_166_667)
    const f = webm({ ns: 4_166_667 })
    const r = await statedFrameRate(reader(f).read, f.length)
    expect(r.fps).toBe(240) // 1e9 / 4 166 667 = 239.99998 → 240.000
    expect(r.source).toContain('read from the file')
  })
  it('says so when the file states none (a recorder that writes as it goes)', async () => {
    const f = webm({})
    expect(webmDefaultDuration(f)).toBeNull()
    const r = await statedFrameRate(reader(f).read, f.length)
    expect(r.fps).toBeNull()
    expect(r.source).toContain('doesn’t state a frame duration')
  })
})

describe('the frame rate an MP4 file states', () => {
  it('is the video track’s time scale over its frame duration: 30000/1001 = 29.970', () => {
    expect(mp4VideoRate(moov({ timescale: 30_000, stts: [[300, 1001]] }))).toEqual({ fps: 30_000 / 1001, variable: false })
    expect(mp4VideoRate(moov({ timescale: 24_000, stts: [[480, 100]], version1: true }))).toEqual({ fps: 240, variable: false })
    // frames of two durations: the average rate, flagged
    expect(mp4VideoRate(moov({ timescale: 600, stts: [[10, 20], [10, 30]] }))).toEqual({ fps: 20 * 600 / 500, variable: true })
    expect(mp4VideoRate(moov({ timescale: 600, stts: [[10, 20]], handler: 'soun' }))).toBeNull()
  })
  it('finds the index after the data, reading only the headers and the index', async () => {
    const mdat = bytes(be(200_008, 4), [...'mdat'].map(c => c.charCodeAt(0)), new Uint8Array(200_000))
    const index = moov({ timescale: 24_000, stts: [[480, 100]] })
    const f = bytes(ftyp, mdat, index)
    const r = reader(f)
    const rate = await statedFrameRate(r.read, f.length)
    expect(rate).toEqual({ fps: 240, source: expect.stringContaining('read from the file') })
    const moovAt = ftyp.length + mdat.length
    expect(r.asked).toEqual([[0, 64 * 1024], [moovAt, moovAt + 16], [moovAt, moovAt + index.length]])
  })
  it('reads an index at the start from the head alone, and says what it can’t read', async () => {
    const f = bytes(ftyp, moov({ timescale: 30_000, stts: [[300, 1001]] }), box('mdat', new Uint8Array(10)))
    const r = reader(f)
    await expect(statedFrameRate(r.read, f.length)).resolves.toEqual({ fps: 29.97, source: expect.stringContaining('read from the file') })
    expect(r.asked).toHaveLength(1)
    const noIndex = bytes(ftyp, box('mdat', new Uint8Array(10)))
    await expect(statedFrameRate(reader(noIndex).read, noIndex.length)).resolves.toEqual({ fps: null, source: expect.stringContaining('no index') })
    const other = new TextEncoder().encode('not a video at all')
    await expect(statedFrameRate(reader(other).read, other.length)).resolves.toEqual({ fps: null, source: expect.stringContaining('WebM and MP4 files only') })
  })
})
