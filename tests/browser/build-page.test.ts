import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { mustSucceed, type World } from '../support/api'
import { goto, launchWithWorld, screenshot, signedInPage, text, watchPage } from '../support/browser'

// Expected strings are worked out by hand: mean ± t(0.975, ν)·u with two significant digits on the
// half-width, in the target's display unit. 1 mph = 1.609344 km/h, 1 lbf·ft = 1.3558179483 N·m.
//   top speed R1  23.0, 23.4, 23.2 km/h        → 23.20 ± 0.50, all below 24: Short
//   top speed R2  15.5, 15.6, 15.4 mph          → 24.94 ± 0.40 km/h, straddles 25: Marginal
//   torque R1     38, 39, 40 N·m                → 39.0 ± 2.5, straddles 40: Marginal
//   torque R2     31.0, 31.2, 31.4 lbf·ft       → 42.30 ± 0.67 N·m, above 40: Met
//   torque R3     44, 45, 46 N·m (via the form) → 45.0 ± 2.5: Met

async function arrange(w: World) {
  const c = w.owner.client
  const b = w.build.slug
  await mustSucceed(c.patch(`/api/v1/builds/${b}`, { name: 'Trailhopper', summary: 'Hub drive unit of an electric cargo trike' }), 'rename build')
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'top_speed', name: 'Assisted top speed', unit: 'km/h', comparator: 'between', threshold: 24, thresholdHigh: 25 }), 'target top_speed')
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'wheel_torque', name: 'Continuous wheel torque', unit: 'N·m', comparator: 'atLeast', threshold: 40, noiseBand: 0.5 }), 'target wheel_torque')
  await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, { label: 'R1', summary: 'First hub motor on the bench', changes: ['spur gear set'] }), 'R1')
  await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, { label: 'R2', summary: 'Helical gears', changes: ['helical gear set instead of spur'] }), 'R2')
  const readings = [
    { revision: 'R1', target: 'top_speed', values: [23.0, 23.4, 23.2], unit: 'km/h' },
    { revision: 'R2', target: 'top_speed', values: [15.5, 15.6, 15.4], unit: 'mph' },
    { revision: 'R1', target: 'wheel_torque', values: [38, 39, 40], unit: 'N·m' },
    { revision: 'R2', target: 'wheel_torque', values: [31.0, 31.2, 31.4], unit: 'lbf·ft' },
  ]
  for (const r of readings) await mustSucceed(c.post(`/api/v1/builds/${b}/readings`, r), `reading ${r.target} ${r.revision}`)
  await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, { label: 'R3', summary: 'Thicker motor case' }), 'R3')
}

describe('the build page in Chromium', () => {
  let browser: Browser
  let w: World
  beforeAll(async () => { ({ browser, w } = await launchWithWorld(arrange)) })
  afterAll(async () => { await browser?.close() })

  it('shows the strip and the matrix, takes a reading through the form and updates the strip', async () => {
    const { context, page } = await signedInPage(browser, w.engineer)
    const { hosts, problems } = watchPage(page)
    await goto(page, `/builds/${w.build.slug}`)

    await expect(text(page, '[data-testid="build-name"]')).resolves.toContain('Trailhopper')
    const speed = '[data-testid="target-card-top_speed"]'
    const torque = '[data-testid="target-card-wheel_torque"]'
    await expect(text(page, `${speed} [data-testid="target-mean"]`)).resolves.toBe('24.94 ± 0.40 km/h')
    await expect(text(page, `${speed} [data-testid="status-word"]`)).resolves.toBe('Marginal')
    await expect(text(page, `${speed} [data-testid="target-threshold"]`)).resolves.toContain('24–25 km/h')
    await expect(text(page, `${torque} [data-testid="target-mean"]`)).resolves.toBe('42.30 ± 0.67 N·m')
    await expect(text(page, `${torque} [data-testid="status-word"]`)).resolves.toBe('Met')
    await expect(text(page, `${torque} [data-testid="target-threshold"]`)).resolves.toContain('≥ 40 N·m')
    await expect(text(page, `${torque} [data-testid="target-margin"]`)).resolves.toBe('margin +5.8 %')
    // status is a shape and a word, never colour alone
    expect(await page.locator(`${torque} [data-testid="status-badge"] svg`).count()).toBe(1)

    await screenshot(page, 'build-page-light')

    // the matrix: value, status and movement per cell; R3 has no reading yet
    const cell = (key: string, rev: string) => `[data-testid="cell-${key}-${rev}"]`
    const cellState = async (key: string, rev: string) => ({
      status: await page.locator(cell(key, rev)).getAttribute('data-status'),
      mean: await page.locator(`${cell(key, rev)} [data-testid="cell-mean"]`).count() ? await text(page, `${cell(key, rev)} [data-testid="cell-mean"]`) : null,
    })
    expect(await cellState('top_speed', 'R1')).toEqual({ status: 'short', mean: '23.20' })
    expect(await cellState('top_speed', 'R2')).toEqual({ status: 'marginal', mean: '24.94' })
    expect(await cellState('wheel_torque', 'R1')).toEqual({ status: 'marginal', mean: '39.0' })
    expect(await cellState('wheel_torque', 'R2')).toEqual({ status: 'met', mean: '42.30' })
    expect(await cellState('wheel_torque', 'R3')).toEqual({ status: 'none', mean: null })
    // R1 is the first reading: nothing to compare; R2 moved the torque up beyond the scatter
    expect(await page.locator(`${cell('wheel_torque', 'R1')} [data-testid="movement-mark"]`).count()).toBe(0)
    const moved = page.locator(`${cell('wheel_torque', 'R2')} [data-testid="movement-mark"]`)
    expect(await moved.getAttribute('data-movement')).toBe('gained')
    expect(await moved.getAttribute('data-real')).toBe('yes')
    expect(await moved.getAttribute('aria-label')).toMatch(/^Gained \(\+3\.3\d* N·m\): a real change/)

    // the reading form: a unit of the wrong quantity gets the server's message beside the form
    await page.getByTestId('add-reading').click()
    const dialog = page.getByTestId('reading-dialog')
    await dialog.waitFor()
    await expect(dialog.getByTestId('pooling-note').innerText()).resolves.toContain('pooled into one sample set')
    expect(await dialog.getByTestId('reading-revision').inputValue()).toBe('R3')
    await dialog.getByTestId('reading-target').selectOption('wheel_torque')
    expect(await dialog.getByTestId('reading-unit').inputValue()).toBe('N·m')
    await dialog.getByTestId('reading-samples').fill('44\n45\n46')
    await expect(dialog.getByTestId('sample-count').innerText()).resolves.toBe('n = 3')
    await dialog.getByTestId('reading-unit').fill('km/h')
    await dialog.getByTestId('reading-method').fill('dyno, 20 min climb')
    await dialog.getByTestId('reading-save').click()
    // the server's refusal is said once, under the unit it is about, and focus goes there
    await page.waitForFunction(() => document.activeElement?.getAttribute('data-testid') === 'reading-unit')
    const unitError = dialog.locator('[data-testid="reading-unit"] ~ p.error-text')
    await unitError.waitFor()
    const message = await unitError.innerText()
    expect(message).toMatch(/velocity/i)
    expect(message).toMatch(/torque/i)
    expect(message).not.toMatch(/^unit: /)
    expect(await dialog.getByTestId('form-error').count()).toBe(0)
    await screenshot(page, 'build-reading-form')

    await dialog.getByTestId('reading-unit').fill('N·m')
    await dialog.getByTestId('reading-save').click()
    await dialog.waitFor({ state: 'detached' })
    await page.waitForFunction(() => document.querySelector('[data-testid="target-card-wheel_torque"] [data-testid="target-mean"]')?.textContent?.includes('45.0'))
    await expect(text(page, `${torque} [data-testid="target-mean"]`)).resolves.toBe('45.0 ± 2.5 N·m')
    await expect(text(page, `${torque} [data-testid="status-word"]`)).resolves.toBe('Met')
    expect(await cellState('wheel_torque', 'R3')).toEqual({ status: 'met', mean: '45.0' })
    await expect(page.getByTestId('toast').first().innerText()).resolves.toContain('45.0 ± 2.5 N·m')

    // keyboard reorder: move the first card right; the order survives a reload
    const order = () => page.locator('[data-testid="target-strip"] article').evaluateAll(els => els.map(e => e.getAttribute('data-testid')))
    expect(await order()).toEqual(['target-card-top_speed', 'target-card-wheel_torque'])
    const saved = page.waitForResponse(r => r.url().endsWith('/targets/order'))
    await page.locator(`${speed} [data-move="1"]`).click()
    expect((await saved).status()).toBe(200)
    await goto(page, `/builds/${w.build.slug}`)
    expect(await order()).toEqual(['target-card-wheel_torque', 'target-card-top_speed'])

    // the target and revision pages
    await goto(page, `/builds/${w.build.slug}/targets/wheel_torque`)
    await screenshot(page, 'target-page-light')
    await expect(text(page, '[data-testid="target-title"]')).resolves.toBe('Continuous wheel torque')
    const statsRow = '[data-testid="revision-stats"] tbody tr:nth-child(2)'
    await expect(text(page, `${statsRow} [data-testid="stats-mean"]`)).resolves.toBe('42.30')
    await expect(text(page, `${statsRow} th`)).resolves.toBe('R2')
    expect(await page.locator('[data-testid="readings-table"] tbody tr').count()).toBe(3)
    await goto(page, `/builds/${w.build.slug}/revisions/R2`)
    await expect(text(page, '[data-testid="revision-title"]')).resolves.toBe('R2')
    await expect(text(page, '[data-testid="revision-target-wheel_torque"] [data-testid="revision-target-mean"]')).resolves.toBe('42.30 ± 0.67 N·m')
    // an Engineer can't sign off, and is told why
    const signOff = page.getByTestId('sign-off')
    expect(await signOff.isDisabled()).toBe(true)
    expect(await signOff.getAttribute('title')).toMatch(/Reviewer or an Owner/)

    // on a phone the strip scrolls sideways instead of squeezing the cards
    await page.setViewportSize({ width: 390, height: 844 })
    await goto(page, `/builds/${w.build.slug}`)
    const strip = await page.locator('[data-testid="target-strip"] ol').evaluate(el => ({ scroll: el.scrollWidth, client: el.clientWidth }))
    expect(strip.scroll).toBeGreaterThan(strip.client)
    await screenshot(page, 'build-page-narrow')

    expect([...hosts]).toEqual(['127.0.0.1'])
    // no hydration mismatches, no errors; the 422 above is the one expected failed request
    expect(problems.filter(p => !p.includes('422'))).toEqual([])
    await context.close()
  })

  it('is read-only for a Reviewer, who signs a revision off; dark theme', async () => {
    const { context, page } = await signedInPage(browser, w.reviewer, { colorScheme: 'dark' })
    await goto(page, `/builds/${w.build.slug}`)
    expect(await page.evaluate(() => document.documentElement.classList.contains('dark'))).toBe(true)
    const add = page.getByTestId('add-reading')
    expect(await add.isDisabled()).toBe(true)
    expect(await add.getAttribute('title')).toMatch(/only Engineers and Owners change data/)
    expect(await page.locator('[data-testid="target-strip"] [data-move]').count()).toBe(0)
    await screenshot(page, 'build-page-dark')

    await goto(page, `/builds/${w.build.slug}/revisions/R1`)
    await page.getByTestId('sign-off').click()
    const dialog = page.getByTestId('sign-off-dialog')
    await dialog.waitFor()
    // the dialog holds focus and closes on Escape
    expect(await page.evaluate(() => Boolean(document.activeElement?.closest('[data-testid="sign-off-dialog"]')))).toBe(true)
    await page.keyboard.press('Escape')
    await dialog.waitFor({ state: 'detached' })
    expect(await page.evaluate(() => document.activeElement?.getAttribute('data-testid'))).toBe('sign-off')
    await page.keyboard.press('Enter')
    await dialog.waitFor()
    await page.getByTestId('confirm-sign-off').click()
    await page.waitForFunction(() => document.querySelector('[data-testid="revision-state"]')?.textContent?.includes('Signed off'))
    const reopen = page.getByTestId('reopen')
    expect(await reopen.isDisabled()).toBe(true)
    expect(await reopen.getAttribute('title')).toMatch(/Only an Owner/)
    await screenshot(page, 'revision-page-dark')

    await goto(page, `/teams/${w.team.slug}`)
    await expect(text(page, `[data-testid="build-card-${w.build.slug}"] [data-testid="build-targets-met"]`)).resolves.toBe('1 / 2 targets met')
    await expect(text(page, `[data-testid="build-card-${w.build.slug}"] [data-testid="build-last-revision"]`)).resolves.toBe('R3')
    await screenshot(page, 'team-home-dark')
    await context.close()
  })
})
