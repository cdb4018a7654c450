import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { mustSucceed, type World } from '../support/api'
import { goto, launchWithWorld, screenshot, signedInPage } from '../support/browser'

// Expected previews from the unit definitions (NIST SP 811 (2008) B.8): 1 lbf = 4.4482216152605 N,
// 1 in = 0.0254 m, so 1 lbf/in = 175.126835… N/m = 0.175126835… N/mm (six significant digits shown).

describe('the unit picker in Chromium', () => {
  let browser: Browser
  let w: World
  beforeAll(async () => {
    ({ browser, w } = await launchWithWorld(async (w) => {
      await mustSucceed(w.owner.client.post(`/api/v1/builds/${w.build.slug}/revisions`, { label: 'R1', summary: 'Spring seat' }), 'R1')
    }))
  })
  afterAll(async () => { await browser?.close() })

  it('finds a unit by a trade word, previews a typed expression, and saves a target in it', async () => {
    const { context, page } = await signedInPage(browser, w.engineer)
    await goto(page, `/builds/${w.build.slug}`)
    await page.getByTestId('add-target').click()
    const form = page.getByTestId('target-form')
    await form.waitFor()
    await form.getByTestId('target-name-input').fill('Return spring rate')
    const unit = form.getByTestId('target-unit')

    // search by a word of the trade: the stiffness units come up, picked by keyboard
    await unit.fill('spring')
    const options = form.getByTestId('target-unit-options')
    await options.waitFor()
    await expect(unit.getAttribute('aria-expanded')).resolves.toBe('true')
    const listed = await form.getByTestId('target-unit-option').allInnerTexts()
    expect(listed.map(t => t.split('\n')[0]!.trim())).toEqual(expect.arrayContaining(['N/mm', 'N/m', 'lbf/in']))
    await unit.press('ArrowDown')
    const first = await form.getByTestId('target-unit-option').first().innerText()
    await expect(unit.getAttribute('aria-activedescendant')).resolves.toBeTruthy()
    await unit.press('Enter')
    await expect(unit.inputValue()).resolves.toBe(first.split('\n')[0]!.trim())
    // the quantity follows the unit once the server has read it
    await expect.poll(() => form.getByTestId('target-unit-quantity').inputValue()).toBe('stiffness')

    // any expression: an inline preview of what it is and what it converts to
    await unit.fill('lbf/in')
    await page.waitForFunction(() => document.querySelector('[data-testid="target-form"] [data-testid="unit-hint"]')?.textContent?.includes('1 lbf/in = 175.127 N/m'))
    await expect(form.getByTestId('unit-hint').innerText()).resolves.toBe('pound-force per inch · stiffness · 1 lbf/in = 175.127 N/m')
    await unit.fill('sin(m)')
    await page.waitForFunction(() => /"sin" is not a unit/.test(document.querySelector('[data-testid="target-form"] [data-testid="unit-hint"]')?.textContent ?? ''))
    await expect(unit.getAttribute('aria-invalid')).resolves.toBe('true')
    await unit.fill('N/mm')
    await page.waitForFunction(() => document.querySelector('[data-testid="target-form"] [data-testid="unit-hint"]')?.textContent?.includes('1 N/mm = 1000 N/m'))
    await form.getByTestId('target-threshold-input').fill('12')
    await screenshot(page, 'unit-picker-target')
    const created = page.waitForResponse(r => r.url().endsWith(`/api/v1/builds/${w.build.slug}/targets`) && r.request().method() === 'POST')
    await form.getByTestId('target-save').click()
    const res = await created
    expect(res.status()).toBe(201)
    expect(await res.json()).toMatchObject({ unit: 'N/mm', quantity: 'stiffness', threshold: 12 })

    // a reading in another unit of the quantity shows its conversion to the target's unit
    await page.getByTestId('add-reading').click()
    const dialog = page.getByTestId('reading-dialog')
    await dialog.waitFor()
    await dialog.getByTestId('reading-unit').fill('lbf/in')
    await page.waitForFunction(() => document.querySelector('[data-testid="reading-dialog"] [data-testid="unit-hint"]')?.textContent?.includes('1 lbf/in = 0.175127 N/mm'))
    await dialog.getByTestId('reading-unit').fill('kg')
    await page.waitForFunction(() => /"kg" is a mass unit; this target is measured in stiffness/.test(document.querySelector('[data-testid="reading-dialog"] [data-testid="unit-hint"]')?.textContent ?? ''))
    // Escape closes the suggestions first, then the dialog
    await dialog.getByTestId('reading-unit').fill('N')
    await dialog.getByTestId('reading-unit-options').waitFor()
    await dialog.getByTestId('reading-unit').press('Escape')
    await dialog.getByTestId('reading-unit-options').waitFor({ state: 'hidden' })
    await expect(dialog.isVisible()).resolves.toBe(true)
    await context.close()
  })
  it('fits a phone in the dark: the suggestions stay inside the screen', async () => {
    const { context, page } = await signedInPage(browser, w.engineer, { colorScheme: 'dark' })
    await page.setViewportSize({ width: 390, height: 844 })
    await goto(page, `/builds/${w.build.slug}`)
    await page.getByTestId('add-target').click()
    const form = page.getByTestId('target-form')
    await form.waitFor()
    await form.getByTestId('target-unit').fill('ohm')
    await form.getByTestId('target-unit-options').waitFor()
    const listed = await form.getByTestId('target-unit-option').allInnerTexts()
    expect(listed.map(t => t.split('\n')[0]!.trim())).toEqual(expect.arrayContaining(['Ω', 'kΩ', 'mΩ', 'MΩ']))
    await screenshot(page, 'unit-picker-phone-dark')
    const box = await form.getByTestId('target-unit-options').boundingBox()
    expect(box!.x).toBeGreaterThanOrEqual(0)
    expect(box!.x + box!.width).toBeLessThanOrEqual(390)
    await expect(page.evaluate(() => document.documentElement.scrollWidth)).resolves.toBeLessThanOrEqual(390)
    await context.close()
  })
})
