import type { Browser, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { mustSucceed, type World } from '../support/api'
import { goto, launchWithWorld, screenshot, signedInPage, text, watchPage } from '../support/browser'

// The target history chart, the derived marks and the compare page, for a build made here.
// Expected figures are worked out by hand: mean ± t(0.975, n − 1)·sd/√n, two significant digits
// on the half-width; 1 mph = 1.609344 km/h (NIST SP 811 B.8).
//   torque R1  38, 39, 40 N·m    → 39.0       speed R1  23.0, 23.4, 23.2 km/h → 23.20
//   torque R2  41, 42, 43 N·m    → 42.0       speed R3  15.5, 15.6, 15.4 mph  → 24.944832 km/h (± 0.40)
//   torque R3  44, 45, 46 N·m    → 45.0 ± 2.5
//   R1 → R3: torque +6.0 N·m, speed +1.74 km/h (24.944832 − 23.2 = 1.744832)

async function arrange(w: World) {
  const c = w.owner.client
  const b = w.build.slug
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'wheel_torque', name: 'Continuous wheel torque', unit: 'N·m', comparator: 'atLeast', threshold: 40, stretch: 44 }), 'torque')
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'top_speed', name: 'Assisted top speed', unit: 'km/h', comparator: 'between', threshold: 24, thresholdHigh: 25 }), 'speed')
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'wheel_speed', name: 'Wheel speed', unit: 'rpm', comparator: 'atLeast', threshold: 50 }), 'wheel speed')
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'wheel_power', name: 'Power at the wheel', unit: 'W', comparator: 'atLeast', threshold: 200, formula: 'wheel_torque * wheel_speed' }), 'power')
  await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, { label: 'R1', changes: ['spur gears'], parameters: [{ name: 'Gear ratio', value: 1 }] }), 'R1')
  await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, { label: 'R2', changes: ['helical gears'] }), 'R2')
  await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, { label: 'R3', changes: ['planetary stage'], parameters: [{ name: 'Gear ratio', value: 1.4 }] }), 'R3')
  await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, { label: 'R4', summary: 'not measured yet' }), 'R4')
  const readings = [
    { revision: 'R1', target: 'wheel_torque', values: [38, 39, 40], unit: 'N·m' },
    { revision: 'R2', target: 'wheel_torque', values: [41, 42, 43], unit: 'N·m' },
    { revision: 'R3', target: 'wheel_torque', values: [44, 45, 46], unit: 'N·m' },
    { revision: 'R1', target: 'top_speed', values: [23.0, 23.4, 23.2], unit: 'km/h' },
    { revision: 'R3', target: 'top_speed', values: [15.5, 15.6, 15.4], unit: 'mph' },
    { revision: 'R1', target: 'wheel_speed', values: [60, 61, 59], unit: 'rpm' },
    { revision: 'R3', target: 'wheel_speed', values: [55, 56, 54], unit: 'rpm' },
  ]
  for (const r of readings) await mustSucceed(c.post(`/api/v1/builds/${b}/readings`, r), `reading ${r.target} ${r.revision}`)
}

/** The chart's wrapper once chart.js has drawn (the attributes are read back from its instance). */
async function drawnChart(page: Page) {
  await page.waitForFunction(() => Number(document.querySelector('[data-testid="history-chart"]')?.getAttribute('data-points') ?? -1) >= 0)
  // let a redraw that is under way finish
  await page.evaluate(() => new Promise(resolve => requestAnimationFrame(() => requestAnimationFrame(resolve))))
  const chart = page.getByTestId('history-chart')
  const attr = async (name: string) => Number(await chart.getAttribute(name))
  return {
    chart,
    points: await attr('data-points'),
    threshold: await attr('data-threshold'),
    px: await attr('data-threshold-px'),
    top: await attr('data-area-top'),
    bottom: await attr('data-area-bottom'),
    left: await attr('data-area-left'),
  }
}

/**
 * What the canvas holds just inside the left edge of the plot (before the first revision's
 * point): the pixels in a short column around y, as brightness (0–255) and opacity.
 */
async function pixelsAt(page: Page, x: number, y: number) {
  return await page.getByTestId('history-chart').locator('canvas').evaluate((canvas: HTMLCanvasElement, at: { x: number, y: number }) => {
    const ctx = canvas.getContext('2d')!
    const scale = canvas.width / canvas.getBoundingClientRect().width
    const rows = Math.max(5, Math.round(5 * scale))
    const data = ctx.getImageData(Math.round(at.x * scale), Math.round((at.y - 2) * scale), 1, rows).data
    const out: { light: number, alpha: number }[] = []
    for (let i = 0; i < rows; i++) out.push({ light: (data[4 * i]! + data[4 * i + 1]! + data[4 * i + 2]!) / 3, alpha: data[4 * i + 3]! })
    return out
  }, { x, y })
}
const drawnDark = (px: { light: number, alpha: number }[]) => px.some(p => p.alpha > 128 && p.light < 120)
const drawnLight = (px: { light: number, alpha: number }[]) => px.some(p => p.alpha > 128 && p.light > 150)

describe('history, derived targets and comparison in Chromium', () => {
  let browser: Browser
  let w: World
  beforeAll(async () => { ({ browser, w } = await launchWithWorld(arrange)) })
  afterAll(async () => { await browser?.close() })

  it('draws one point per revision with a reading, the threshold at its value, and the same numbers as a table', async () => {
    const { context, page } = await signedInPage(browser, w.engineer)
    const { hosts, problems } = watchPage(page)

    await goto(page, `/builds/${w.build.slug}/targets/wheel_torque`)
    const drawn = await drawnChart(page)
    // R1, R2 and R3 have readings; R4 has none
    expect(drawn.points).toBe(3)
    expect(drawn.threshold).toBe(40)
    expect(drawn.px).toBeGreaterThan(drawn.top)
    expect(drawn.px).toBeLessThan(drawn.bottom)
    expect(await drawn.chart.getAttribute('data-theme')).toBe('light')
    // a dark line (the threshold) at that height in the light theme, and not 25 px below it
    expect(drawnDark(await pixelsAt(page, drawn.left + 4, drawn.px))).toBe(true)
    expect(drawnDark(await pixelsAt(page, drawn.left + 4, drawn.px + 25))).toBe(false)
    await expect(text(page, '[data-testid="chart-forecast-note"]')).resolves.toContain('a straight line through 3 points')
    await screenshot(page, 'history-chart-light')

    // the table view: the same numbers
    await page.getByTestId('chart-toggle').click()
    expect(await page.locator('[data-testid="history-table"] tbody tr').count()).toBe(3)
    await expect(text(page, '[data-testid="history-row-R3"] [data-testid="history-mean"]')).resolves.toBe('45.0 ± 2.5 N·m')
    // the revisions that moved it
    expect(await page.getByTestId('moved-by').count()).toBe(1)

    // a derived target: marked, its budget, no readings of its own
    await goto(page, `/builds/${w.build.slug}/targets/wheel_power`)
    expect(await page.locator('[data-testid="target-header"] [data-testid="derived-tag"]').count()).toBe(1)
    await expect(text(page, '[data-testid="definition-formula"]')).resolves.toBe('wheel_torque * wheel_speed')
    expect(await page.locator('[data-testid^="budget-wheel_"]').count()).toBe(2)
    const derivedChart = await drawnChart(page)
    expect(derivedChart.points).toBe(2) // R1 and R3 have both inputs; R2 has no wheel speed
    expect(await page.locator('[data-testid="history-cant-R2"]').count()).toBe(1)
    expect(await page.getByTestId('add-reading').isDisabled()).toBe(true)
    expect(await page.getByTestId('add-reading').getAttribute('title')).toMatch(/derived target takes no readings/)

    // the strip and the matrix mark it too
    await goto(page, `/builds/${w.build.slug}`)
    expect(await page.locator('[data-testid="target-card-wheel_power"] [data-testid="derived-tag"]').count()).toBe(1)
    expect(await page.locator('[data-testid="matrix-row-wheel_power"] [data-testid="derived-tag"]').count()).toBe(1)
    expect(await page.locator('[data-testid="cell-wheel_power-R2"]').getAttribute('data-status')).toBe('cant-evaluate')

    expect([...hosts]).toEqual(['127.0.0.1'])
    // Chromium's hint about reading canvas pixels back comes from this test's own pixel checks
    expect(problems.filter(p => !p.includes('willReadFrequently'))).toEqual([])
    await context.close()
  })

  it('reads the dark theme from <html>', async () => {
    const { context, page } = await signedInPage(browser, w.reviewer, { colorScheme: 'dark' })
    await goto(page, `/builds/${w.build.slug}/targets/wheel_torque`)
    expect(await page.evaluate(() => document.documentElement.classList.contains('dark'))).toBe(true)
    await page.waitForFunction(() => document.querySelector('[data-testid="history-chart"]')?.getAttribute('data-theme') === 'dark')
    const drawn = await drawnChart(page)
    expect(drawn.threshold).toBe(40)
    // now a light line in the dark theme
    expect(drawnLight(await pixelsAt(page, drawn.left + 4, drawn.px))).toBe(true)
    expect(drawnLight(await pixelsAt(page, drawn.left + 4, drawn.px + 25))).toBe(false)
    await screenshot(page, 'history-chart-dark')
    await context.close()
  })

  it('the compare page shows every target\'s change from A to B, with the choice in the address', async () => {
    const { context, page } = await signedInPage(browser, w.engineer)
    await goto(page, `/builds/${w.build.slug}/compare?a=R1&b=R3`)
    await expect(text(page, '[data-testid="compare-row-wheel_torque"] [data-testid="compare-delta"]')).resolves.toBe('+6.0 N·m')
    await expect(text(page, '[data-testid="compare-row-top_speed"] [data-testid="compare-delta"]')).resolves.toBe('+1.74 km/h')
    expect(await page.getByTestId('compare-row-wheel_torque').getAttribute('data-movement')).toBe('gained')
    expect(await page.getByTestId('compare-row-wheel_torque').getAttribute('data-real')).toBe('yes')
    expect(await page.locator('[data-testid="compare-row-wheel_power"] [data-testid="derived-tag"]').count()).toBe(1)
    expect(await page.getByTestId('param-Gear ratio').getAttribute('data-differs')).toBe('yes')
    await screenshot(page, 'compare-page')

    // choosing another A changes the address and the table: R2 has no speed reading
    await page.getByTestId('compare-a').selectOption('R2')
    await page.waitForURL(/a=R2/)
    await page.waitForFunction(() => document.querySelector('[data-testid="compare-row-top_speed"] [data-testid="compare-note"]')?.textContent?.includes('R2 has no reading'))
    await expect(text(page, '[data-testid="compare-row-wheel_torque"] [data-testid="compare-delta"]')).resolves.toBe('+3.0 N·m')
    await context.close()
  })
})
