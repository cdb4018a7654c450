// The demo's measured clip (invented): Arcwheel R3 fires a ball across the frame past a 300 mm rule
// fixed in the ball's plane, filmed at 240 frames per second. The drawing and the marks the demo's
// track reading was taken from share these numbers, so the reading agrees with the footage.
//   scale  the rule's ends at x = 150 and x = 283 px: 133 px = 300 mm
//   ball   18.1 m/s = 18,100 mm/s × 133/300 px/mm / 240 frames/s = 33.4347 px per frame, centre
//          x(k) = 33.4347·k − 300 px on frame k, y = 92 px; it crosses the frame on frames 10–22
// The marks are the ball's centre rounded to whole pixels, as a person clicks them: they scatter
// by up to ½ px about the line, which is the scatter the fit reports.

export const ARCWHEEL_CLIP = {
  file: 'arcwheel-exit-R3.webm',
  width: 480,
  height: 200,
  fps: 240,
  frames: 34,
  speedMmPerS: 18_100,
  rule: { a: { x: 150, y: 150 }, b: { x: 283, y: 150 }, mm: 300 },
  ballY: 92,
  ballRadiusPx: 14,
  /** the frames the demo's track reading marks */
  marked: [12, 13, 14, 15, 16, 17, 18, 19, 20],
}

const pxPerMm = (ARCWHEEL_CLIP.rule.b.x - ARCWHEEL_CLIP.rule.a.x) / ARCWHEEL_CLIP.rule.mm
const pxPerFrame = ARCWHEEL_CLIP.speedMmPerS * pxPerMm / ARCWHEEL_CLIP.fps
export const ballX = (frame: number) => pxPerFrame * frame - 300

/** The track as the measuring screen saves it: frame centre times in s, positions in mm from the first mark. */
export function arcwheelTrack(): { points: { t: number, x: number, frame: number }[], timeUnit: string, unit: string } {
  const { rule, fps, marked } = ARCWHEEL_CLIP
  const mmPerPx = rule.mm / (rule.b.x - rule.a.x)
  const first = Math.round(ballX(marked[0]!))
  return {
    points: marked.map(k => ({ t: Number(((k + 0.5) / fps).toFixed(9)), x: Number(((Math.round(ballX(k)) - first) * mmPerPx).toFixed(6)), frame: k })),
    timeUnit: 's',
    unit: 'mm',
  }
}

/** Source of the drawing function `(g, k, t) => void` for scripts/lib/canvasFootage.ts. */
export const ARCWHEEL_DRAW = `(g, k, t) => {
  g.fillStyle = '#1b1d1f'
  g.fillRect(0, 0, ${ARCWHEEL_CLIP.width}, ${ARCWHEEL_CLIP.height})
  // the launcher's two wheels at the left edge, the catch net at the right
  g.strokeStyle = '#6b6f73'
  g.lineWidth = 4
  g.beginPath(); g.arc(-20, 52, 34, 0, 2 * Math.PI); g.stroke()
  g.beginPath(); g.arc(-20, 132, 34, 0, 2 * Math.PI); g.stroke()
  g.strokeStyle = '#3f4a44'
  g.lineWidth = 1
  for (let y = 20; y < 180; y += 10) { g.beginPath(); g.moveTo(452, y); g.lineTo(478, y + 6); g.stroke() }
  // the 300 mm rule with its end marks, in the ball's plane
  g.fillStyle = '#e9e6dc'
  g.fillRect(${ARCWHEEL_CLIP.rule.a.x}, ${ARCWHEEL_CLIP.rule.a.y - 1}, ${ARCWHEEL_CLIP.rule.b.x - ARCWHEEL_CLIP.rule.a.x}, 3)
  g.fillRect(${ARCWHEEL_CLIP.rule.a.x - 1}, ${ARCWHEEL_CLIP.rule.a.y - 9}, 3, 18)
  g.fillRect(${ARCWHEEL_CLIP.rule.b.x - 1}, ${ARCWHEEL_CLIP.rule.b.y - 9}, 3, 18)
  g.font = '12px sans-serif'
  g.fillText('300 mm', 196, 174)
  g.fillText('frame ' + k, 10, 190)
  g.fillStyle = '#c28a12'
  g.fillText('DEMO DATA · Arcwheel R3', 10, 16)
  // the ball
  g.fillStyle = '#f2f2ea'
  g.beginPath()
  g.arc(${pxPerFrame} * k - 300, ${ARCWHEEL_CLIP.ballY}, ${ARCWHEEL_CLIP.ballRadiusPx}, 0, 2 * Math.PI)
  g.fill()
}`
