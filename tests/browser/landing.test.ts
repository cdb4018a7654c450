import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { goto, launchBrowser, newContext, screenshot } from '../support/browser'

describe('the landing page in Chromium', () => {
  let browser: Browser
  beforeAll(async () => { browser = await launchBrowser() })
  afterAll(async () => { await browser?.close() })

  it('uses Manrope, loads nothing from another host, and switches to dark', async () => {
    const context = await newContext(browser)
    const page = await context.newPage()
    const hosts = new Set<string>()
    page.on('request', req => hosts.add(new URL(req.url()).hostname))

    await goto(page, '/')
    await expect(page.getByTestId('landing').isVisible()).resolves.toBe(true)

    const family = await page.evaluate(() => getComputedStyle(document.body).fontFamily)
    expect(family.split(',')[0]!.replace(/["']/g, '').trim()).toBe('Manrope')
    // the font file itself was loaded (from this server), not just named
    const loaded = await page.evaluate(async () => {
      await document.fonts.ready
      return document.fonts.check('16px Manrope')
    })
    expect(loaded).toBe(true)

    expect([...hosts]).toEqual(['127.0.0.1'])

    const isDark = () => page.evaluate(() => document.documentElement.classList.contains('dark'))
    expect(await isDark()).toBe(false)
    await screenshot(page, 'landing-light')
    // system → light → dark
    await page.getByTestId('theme-switch').click()
    await page.getByTestId('theme-switch').click()
    expect(await isDark()).toBe(true)
    const bg = await page.evaluate(() => getComputedStyle(document.documentElement).backgroundColor)
    expect(bg).toBe('rgb(18, 18, 16)')
    await screenshot(page, 'landing-dark')

    // remembered across a reload
    await goto(page, '/')
    expect(await isDark()).toBe(true)
    await context.close()
  })
})
