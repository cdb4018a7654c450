// Makes the demo's footage in seeds/assets (invented, drawn): Trailhopper's roller dyno run and
// Arcwheel's ball crossing the frame at 240 fps (scripts/lib/demoClips.ts). The seed ships the
// results; a clip already there is left as it is unless --force. Chromium's MediaRecorder records
// a canvas as VP8 WebM, rewritten seekable (scripts/lib/canvasFootage.ts).
//   npx tsx scripts/make-demo-footage.ts [--force]
import { existsSync, writeFileSync } from 'node:fs'
import { chromium } from 'playwright-core'
import { makeSeekable, recordCanvas } from './lib/canvasFootage'
import { ARCWHEEL_CLIP, ARCWHEEL_DRAW } from './lib/demoClips'

// the roller and the wheel on it, spokes turning with the speed, the speed written beside
const DRAW = `(g, k, t) => {
  const speed = 18 + 6.4 * Math.min(1, t / 3.2)
  g.fillStyle = '#1d1c1a'
  g.fillRect(0, 0, 320, 180)
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
  g.fillText(speed.toFixed(1) + ' km/h', 172, 84)
  g.font = '12px sans-serif'
  g.fillText('Trailhopper R5 · roller dyno', 172, 108)
  g.fillText('t = ' + t.toFixed(2) + ' s', 172, 126)
  g.fillStyle = '#c28a12'
  g.fillText('DEMO DATA', 10, 18)
}`

const browser = await chromium.launch({
  executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
  args: ['--headless', '--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'],
})
const clips = [
  { file: 'trailhopper-dyno-r5.webm', make: async () => makeSeekable(await recordCanvas(await browser.newPage(), { width: 320, height: 180, fps: 24, frames: Math.ceil(4.2 * 24), bitsPerSecond: 140_000, draw: DRAW })) },
  {
    file: ARCWHEEL_CLIP.file,
    // pushed a frame every 80 ms, so no frame is dropped, then put on the 1/240 s grid the camera's file would have
    make: async () => makeSeekable(await recordCanvas(await browser.newPage(), { width: ARCWHEEL_CLIP.width, height: ARCWHEEL_CLIP.height, fps: ARCWHEEL_CLIP.fps, frames: ARCWHEEL_CLIP.frames, bitsPerSecond: 600_000, draw: ARCWHEEL_DRAW, paceMs: 80 }), { frameSeconds: 1 / ARCWHEEL_CLIP.fps, stateRate: true }),
  },
]
try {
  for (const clip of clips) {
    const out = new URL(`../seeds/assets/${clip.file}`, import.meta.url)
    if (existsSync(out) && !process.argv.includes('--force')) continue
    const bytes = await clip.make()
    writeFileSync(out, bytes)
    console.log(`footage: ${bytes.length} bytes written to seeds/assets/${clip.file}`)
  }
}
finally {
  await browser.close()
}
