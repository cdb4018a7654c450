import type { Browser, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { makeSeekable, recordCanvas } from '../../scripts/lib/canvasFootage'
import { closeTestDb, mustSucceed, type World } from '../support/api'
import { axeViolations, goto, launchWithWorld, screenshot, signedInPage, text, watchPage } from '../support/browser'
import { uploadOk } from '../support/files'

// The measuring screen, driven by the keyboard alone, on footage made here: a dot crossing the frame
// at a known speed beside a bar of known length, drawn on a canvas and recorded by Chromium's
// MediaRecorder (scripts/lib/canvasFootage.ts), its frames retimed to k/30 s. Frame k shows the dot at x = 40 + 131·k/30 px (pixel
// centres), so at 30 fps it moves 131 px/s; the bar's ends are at x = 60 and x = 420 px, 360 px
// standing for 300 mm. The dot's speed is therefore 131 × 300/360 = 109.1667 mm/s = 0.1091667 m/s
// (worked out by hand). Its positions fall between pixels, so the marks (whole pixels, where the
// dot's centroid is in the shown frame) scatter by up to ½ px about the line, and the saved speed
// must agree with 0.1091667 m/s within the 95 % interval the screen shows.

const FPS = 30
const W = 480
const H = 270
const PX_PER_S = 131
const BAR = { a: { x: 60, y: 234 }, b: { x: 420, y: 234 }, mm: 300 }
const TRUE_SPEED = PX_PER_S * BAR.mm / (BAR.b.x - BAR.a.x) / 1000 // m/s
const DRAW = `(g, k, t) => {
  g.fillStyle = '#202020'
  g.fillRect(0, 0, ${W}, ${H})
  g.fillStyle = '#ffffff'
  g.fillRect(${BAR.a.x - 1}, 222, 3, 25)
  g.fillRect(${BAR.b.x - 1}, 222, 3, 25)
  g.fillRect(${BAR.a.x}, 233, ${BAR.b.x - BAR.a.x}, 3)
  g.font = '14px sans-serif'
  g.fillText('${BAR.mm} mm', 215, 262)
  g.fillStyle = 'rgb(255, 90, 0)'
  g.beginPath()
  g.arc(40.5 + ${PX_PER_S} * t, 110.5, 7, 0, 2 * Math.PI)
  g.fill()
}`
// Frames to mark: not the first two nor the last; at uneven steps (marks every 8 frames would round
// to exactly 35 px apart, a line with no scatter) and where the dot's true position is at least
// 0.15 px from halfway between two pixels, so the codec's blur can't tip a mark's rounding. The
// recorder sometimes keeps the picture drawn before it started as an extra first frame, which
// shifts every frame by one (the speed is the same): the frames work either way. Worked out
// beforehand from x = 40 + 131·k/30: their rounded positions give a slope within 0.1 half-widths
// of its 95 % interval of the true one, for k = frame and for k = frame − 1.
const MARK_FRAMES = [3, 10, 14, 21, 28, 39, 44, 50, 63, 70]

async function makeFootage(browser: Browser): Promise<Buffer> {
  const page = await browser.newPage()
  try {
    // recorded at a tenth of a second a frame, slower than real time, so a busy machine drops
    // none; the recorder stamps frames as they are captured, and frame k goes to exactly k/30 s
    return makeSeekable(await recordCanvas(page, { width: W, height: H, fps: FPS, frames: 75, bitsPerSecond: 1_000_000, draw: DRAW, paceMs: 100 }), { frameSeconds: 1 / FPS })
  }
  finally {
    await page.close()
  }
}

/** Where the dot is in the frame the page shows: the centroid of its orange pixels, read off the video. */
async function dotInFrame(page: Page): Promise<{ x: number, y: number, n: number }> {
  return await page.evaluate(() => {
    const v = document.querySelector<HTMLVideoElement>('[data-testid="motion-video"]')!
    const c = document.createElement('canvas')
    c.width = v.videoWidth
    c.height = v.videoHeight
    const g = c.getContext('2d')!
    g.drawImage(v, 0, 0)
    const d = g.getImageData(0, 0, c.width, c.height).data
    let sx = 0
    let sy = 0
    let n = 0
    for (let y = 0; y < c.height; y++) {
      for (let x = 0; x < c.width; x++) {
        const i = (y * c.width + x) * 4
        if (d[i]! > 170 && d[i]! - d[i + 2]! > 120 && d[i + 1]! < 180) {
          sx += x
          sy += y
          n++
        }
      }
    }
    return { x: sx / n, y: sy / n, n }
  })
}

async function crosshair(page: Page): Promise<{ x: number, y: number }> {
  const [x, y] = (await page.getByTestId('motion-stage').getAttribute('data-crosshair'))!.split(',').map(Number)
  return { x: x!, y: y! }
}

/** Moves the crosshair with I/J/K/L (Shift: 10 px) to (x, y). */
async function moveTo(page: Page, x: number, y: number) {
  const at = await crosshair(page)
  for (const [d, plus, minus] of [[x - at.x, 'L', 'J'], [y - at.y, 'K', 'I']] as const) {
    const key = d > 0 ? plus : minus
    for (let i = 0; i < Math.floor(Math.abs(d) / 10); i++) await page.keyboard.press(`Shift+${key}`)
    for (let i = 0; i < Math.abs(d) % 10; i++) await page.keyboard.press(key.toLowerCase())
  }
  expect(await crosshair(page)).toEqual({ x, y })
}

async function shownFrame(page: Page, frame: number) {
  await page.waitForFunction(f => document.querySelector('[data-testid="motion-stage"]')?.getAttribute('data-shown-frame') === String(f), frame)
}

/** Steps from `from` to `to` with the arrow keys (Shift: 10 frames). */
async function stepTo(page: Page, from: number, to: number) {
  const d = to - from
  for (let i = 0; i < Math.floor(Math.abs(d) / 10); i++) await page.keyboard.press(d > 0 ? 'Shift+ArrowRight' : 'Shift+ArrowLeft')
  for (let i = 0; i < Math.abs(d) % 10; i++) await page.keyboard.press(d > 0 ? 'ArrowRight' : 'ArrowLeft')
  await shownFrame(page, to)
}

/** Form fields without a name a screen reader can read out. */
async function unlabelled(page: Page): Promise<string[]> {
  return await page.evaluate(() => [...document.querySelectorAll<HTMLInputElement | HTMLSelectElement>('main input, main select, main textarea, main button')]
    .filter(el => !((el as HTMLInputElement).labels?.length || el.getAttribute('aria-label') || el.getAttribute('aria-labelledby') || (el.tagName === 'BUTTON' && el.textContent?.trim())))
    .map(el => el.outerHTML.slice(0, 120)))
}

describe('measuring motion on footage, by keyboard, in Chromium', () => {
  let browser: Browser
  let w: World
  let fileId: string
  beforeAll(async () => {
    ({ browser, w } = await launchWithWorld(async (w) => {
      const c = w.owner.client
      const b = w.build.slug
      await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'puck_speed', name: 'Puck launch speed', unit: 'm/s', comparator: 'atLeast', threshold: 0.1 }), 'target')
      await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'arm_torque', name: 'Arm torque', unit: 'N·m', comparator: 'atLeast', threshold: 2 }), 'target')
      await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, { label: 'R1', summary: 'Spring launcher, first cut' }), 'R1')
    }))
    fileId = (await uploadOk(w.engineer.client, w.build.slug, 'launcher run R1.webm', await makeFootage(browser))).id
  }, 120_000)
  afterAll(async () => {
    await browser?.close()
    await closeTestDb()
  })

  it('opens from the evidence viewer, sets the frame rate, scale and marks with keys, and saves a speed that holds the true one', async () => {
    const { context, page } = await signedInPage(browser, w.engineer)
    await page.setViewportSize({ width: 1440, height: 900 })
    const { hosts, problems } = watchPage(page)
    await goto(page, `/builds/${w.build.slug}?tab=files`)

    // the video's card, the viewer, its "Measure motion": all by keyboard
    await page.locator(`[data-testid="file-${fileId}"] [data-testid="file-open"]`).focus()
    await page.keyboard.press('Enter')
    const viewer = page.getByTestId('viewer-dialog')
    await viewer.getByTestId('viewer-video').waitFor()
    await viewer.getByTestId('measure-motion').focus()
    await page.keyboard.press('Enter')
    await page.waitForURL(`**/builds/${w.build.slug}/files/${fileId}/measure`)
    await page.getByTestId('motion-measure').waitFor()
    await shownFrame(page, 0)
    await expect(text(page, '[data-testid="measure-file"]')).resolves.toBe('launcher run R1.webm')
    // the recorder states no frame rate: the page says so and the rate must be confirmed
    await expect(text(page, '[data-testid="motion-fps-source"]')).resolves.toContain('Not read from the file')
    await expect(text(page, '[data-testid="motion-limits"]')).resolves.toMatch(/Motion blur.*Perspective.*Rolling shutter.*Frame-rate claims/)

    await page.getByTestId('motion-fps').focus()
    await page.keyboard.press('ControlOrMeta+A')
    await page.keyboard.type('30')
    await page.keyboard.press('Tab')
    expect(await page.evaluate(() => document.activeElement?.getAttribute('data-testid'))).toBe('motion-fps-checked')
    await page.keyboard.press('Space')
    expect(await page.getByTestId('motion-fps-checked').isChecked()).toBe(true)

    // the scale: Enter sets end A, then end B, at the crosshair
    await page.getByTestId('motion-scale-length').focus()
    await page.keyboard.type('300')
    await page.getByTestId('motion-stage').focus()
    expect(await page.getByTestId('motion-mode-a').isChecked()).toBe(true)
    await moveTo(page, BAR.a.x, BAR.a.y)
    await page.keyboard.press('Enter')
    expect(await page.getByTestId('motion-mode-b').isChecked()).toBe(true)
    await moveTo(page, BAR.b.x, BAR.b.y)
    await page.keyboard.press('Enter')
    expect(await page.getByTestId('motion-mode-mark').isChecked()).toBe(true)
    await expect(text(page, '[data-testid="motion-scale-ends"]')).resolves.toBe('A 60, 234 · B 420, 234 · 360 px apart')

    // marks: a wrong one on frame 3 replaced, one on frame 1 removed again
    await stepTo(page, 0, 1)
    await moveTo(page, 200, 50)
    await page.keyboard.press('Enter')
    await page.keyboard.press('Delete')
    await page.getByTestId('motion-no-marks').waitFor()
    let frame = 1
    let shift: number | null = null
    const seen: { frame: number, x: number, y: number }[] = []
    for (const f of MARK_FRAMES) {
      await stepTo(page, frame, f)
      frame = f
      const dot = await dotInFrame(page)
      expect(dot.n, `the dot's pixels on frame ${f}`).toBeGreaterThan(60)
      // the dot is where the drawing put it, give or take the codec, on every frame the same shift
      shift ??= Math.round((dot.x - 40) * FPS / PX_PER_S) - f
      expect([0, -1]).toContain(shift)
      expect(Math.abs(dot.x - (40 + PX_PER_S * (f + shift) / FPS)), `frame ${f}`).toBeLessThan(1)
      if (f === 3) {
        await moveTo(page, Math.round(dot.x) + 6, Math.round(dot.y))
        await page.keyboard.press('Enter')
      }
      await moveTo(page, Math.round(dot.x), Math.round(dot.y))
      await page.keyboard.press('Enter')
      seen.push({ frame: f, x: Math.round(dot.x), y: Math.round(dot.y) })
    }
    expect(await page.getByTestId('motion-marks').locator('li').count()).toBe(MARK_FRAMES.length)
    await expect(text(page, '[data-testid="motion-announce"]')).resolves.toContain(`${MARK_FRAMES.length} marks`)
    expect(await page.getByTestId('motion-parallax').count()).toBe(0)

    // the fit, its interval, the pixel budget's advice
    const shown = await text(page, '[data-testid="motion-speed"]')
    const [, mean, half] = shown.match(/^([\d.]+) ± ([\d.]+) mm\/s$/) ?? []
    expect(shown).toMatch(/mm\/s$/)
    expect(Math.abs(Number(mean) - TRUE_SPEED * 1000)).toBeLessThanOrEqual(Number(half))
    await expect(text(page, '[data-testid="motion-budget-advice"]')).resolves.toMatch(/would help/)
    await page.getByTestId('motion-plot').waitFor()

    // saving: the only velocity target, R1, the method prefilled
    expect(await page.getByTestId('motion-target').locator('option').allInnerTexts()).toEqual(['Puck launch speed (m/s)'])
    expect(await page.getByTestId('motion-method').inputValue()).toBe(`footage, 30 fps, ${MARK_FRAMES.length} frames`)
    await expect(text(page, '[data-testid="motion-save"] [data-testid="caution"]')).resolves.toContain('projectiles')

    // R1 signed off meanwhile: the refusal is shown, nothing saved
    await mustSucceed(w.owner.client.post(`/api/v1/builds/${w.build.slug}/revisions/R1/freeze`, {}), 'freeze')
    await page.getByTestId('motion-save-button').focus()
    await page.keyboard.press('Enter')
    await page.getByTestId('motion-save-error').waitFor()
    await expect(text(page, '[data-testid="motion-save-error"]')).resolves.toMatch(/signed off/i)
    await mustSucceed(w.owner.client.post(`/api/v1/builds/${w.build.slug}/revisions/R1/unfreeze`, { reason: 'Launcher footage to add' }), 'reopen')

    await page.getByTestId('motion-save-button').focus()
    await page.keyboard.press('Enter')
    await page.getByTestId('motion-saved-summary').waitFor()
    await expect(text(page, '[data-testid="motion-saved-summary"]')).resolves.toMatch(/^Track \(fitted speed\), [\d.]+ ± [\d.]+ m\/s — Met$/)
    await page.evaluate(() => window.scrollTo(0, 0))
    await screenshot(page, 'measure-motion-1440-light')

    // the saved reading, through the API: the speed holds the true one within its interval
    const detail = await mustSucceed(w.reviewer.client.get(`/api/v1/builds/${w.build.slug}/targets/puck_speed`), 'target')
    const readings = detail.body.readings as { kind: string, stats: { mean: number, ci95: [number, number], u: number }, dof: number, method: string, track: { file: string, unit: string, timeUnit: string, points: { t: number, x: number, frame: number }[] } }[]
    expect(readings).toHaveLength(1)
    const r = readings[0]!
    expect(r.kind).toBe('track')
    expect(r.dof).toBe(MARK_FRAMES.length - 2)
    expect(r.method).toBe(`footage, 30 fps, ${MARK_FRAMES.length} frames`)
    expect(r.track.file).toBe(fileId)
    expect(r.track).toMatchObject({ unit: 'mm', timeUnit: 's' })
    expect(r.track.points.map(p => p.frame)).toEqual(MARK_FRAMES)
    expect(r.track.points.map(p => p.t)).toEqual(MARK_FRAMES.map(f => f / FPS))
    // positions along the path from the first mark, in mm: the marks' x offsets × 300/360
    for (const [i, p] of r.track.points.entries()) expect(p.x).toBeCloseTo((seen[i]!.x - seen[0]!.x) * BAR.mm / (BAR.b.x - BAR.a.x), 9)
    expect(r.stats.ci95[0]).toBeLessThanOrEqual(TRUE_SPEED)
    expect(r.stats.ci95[1]).toBeGreaterThanOrEqual(TRUE_SPEED)
    expect(r.stats.u).toBeGreaterThan(0)
    // the screen's number is the saved one (mm/s there, m/s here)
    expect(Math.abs(r.stats.mean * 1000 - Number(mean))).toBeLessThan(Number(half) / 10)
    const files = await mustSucceed(w.reviewer.client.get(`/api/v1/builds/${w.build.slug}/files?id=${fileId}`), 'file')
    expect(files.body.items[0].reading).toMatchObject({ target: 'puck_speed', revision: 'R1' })

    expect(await unlabelled(page)).toEqual([])
    expect(await axeViolations(page, 'main')).toEqual([])
    await expect(page.evaluate(() => document.documentElement.scrollWidth)).resolves.toBeLessThanOrEqual(1440)
    expect([...hosts]).toEqual(['127.0.0.1'])
    // the browser logs the refused save (the signed-off revision), and nothing else
    expect(problems).toEqual(['Failed to load resource: the server responded with a status of 409 (Server Error)'])
    await context.close()
  }, 180_000)

  it('fits 390 px in dark mode, warns of a scale far from the path, and tells a Reviewer why it can’t save', async () => {
    const { context, page } = await signedInPage(browser, w.reviewer, { colorScheme: 'dark' })
    await page.setViewportSize({ width: 390, height: 844 })
    const { problems } = watchPage(page)
    await goto(page, `/builds/${w.build.slug}/files/${fileId}/measure`)
    await shownFrame(page, 0)
    await page.getByTestId('motion-scale-length').fill('300')
    // the scale bar set far above the path (its midpoint 200 px away, the bar 100 px long)
    await page.getByTestId('motion-stage').focus()
    await moveTo(page, 100, 0)
    await page.keyboard.press('Enter')
    await moveTo(page, 200, 0)
    await page.keyboard.press('Enter')
    for (const f of [5, 25, 45]) {
      await stepTo(page, f === 5 ? 0 : f - 20, f)
      const dot = await dotInFrame(page)
      await moveTo(page, Math.round(dot.x), Math.round(dot.y))
      await page.keyboard.press('Enter')
    }
    await expect(text(page, '[data-testid="motion-parallax"]')).resolves.toContain('farther than its own length')
    await page.getByTestId('motion-speed').waitFor()
    await expect(text(page, '[data-testid="motion-save-why"]')).resolves.toContain('only Engineers and Owners change data')
    await expect(page.evaluate(() => document.documentElement.scrollWidth)).resolves.toBeLessThanOrEqual(390)
    await page.evaluate(() => window.scrollTo(0, 0))
    await screenshot(page, 'measure-motion-390-dark')
    expect(await unlabelled(page)).toEqual([])
    expect(await axeViolations(page, 'main')).toEqual([])
    expect(problems).toEqual([])
    await context.close()
  }, 120_000)
})
