import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { API_TAGS, apiRoutes } from '../../server/utils/api/routes'
import { launchBrowser, newContext, screenshot, watchPage } from '../support/browser'

describe('the API reference at /api/v1/docs', () => {
  let browser: Browser
  beforeAll(async () => { browser = await launchBrowser() })
  afterAll(async () => { await browser?.close() })

  it('lists every documented route, opens one, and asks nothing of another host', async () => {
    const context = await newContext(browser)
    const page = await context.newPage()
    const watched = watchPage(page)
    const urls: string[] = []
    page.on('request', req => urls.push(req.url()))

    const res = await page.goto('/api/v1/docs', { waitUntil: 'networkidle' })
    expect(res?.status()).toBe(200)
    expect(res?.headers()['content-security-policy']).toContain('script-src \'self\'')
    await page.locator('.opblock').first().waitFor()

    // the routes in their groups, one block per documented operation, titled with its path
    await expect(page.locator('.opblock-tag').count()).resolves.toBe(Object.keys(API_TAGS).length)
    await expect(page.locator('.opblock').count()).resolves.toBe(apiRoutes.length)
    const paths = await page.locator('.opblock-summary-path').allInnerTexts()
    expect(new Set(paths.map(p => p.replace(/\u200B/g, '').trim()))).toEqual(new Set(apiRoutes.map(r => r.path)))
    await expect(page.locator('.info .title').innerText()).resolves.toContain('Ratchet API')

    // a route opens on its parameters and body, with the example from the shared schema
    const readings = page.locator('.opblock-post').filter({ hasText: '/api/v1/builds/{build}/readings' }).first()
    await readings.locator('.opblock-summary').click()
    await readings.locator('.opblock-body').waitFor()
    await expect(readings.locator('.opblock-body').innerText()).resolves.toContain('top_speed')
    await screenshot(page, 'api-docs')

    // everything came from this server: the page, the UI's files and the document
    expect([...watched.hosts]).toEqual(['127.0.0.1'])
    expect(urls).toEqual(expect.arrayContaining([
      expect.stringMatching(/\/api\/v1\/docs\/swagger-ui-bundle\.js$/),
      expect.stringMatching(/\/api\/v1\/docs\/init\.js$/),
      expect.stringMatching(/\/api\/v1\/openapi\.json$/),
    ]))
    // no script error and nothing the page's Content-Security-Policy refused
    expect(watched.problems).toEqual([])
    await context.close()
  })
})
