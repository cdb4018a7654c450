import type { Browser, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, type World } from '../support/api'
import { goto, launchWithWorld, newContext, screenshot, signIn, waitForHydration } from '../support/browser'
import { upload } from '../support/files'
import { addReading, newRevision, newTarget } from '../support/measure'

/** Records every CSP violation a page reports: the DOM event, and Chromium's console message. */
async function watchViolations(page: Page): Promise<string[]> {
  const seen: string[] = []
  page.on('console', (msg) => {
    if (/Content Security Policy|Refused to (load|execute|apply|connect|frame)/i.test(msg.text())) seen.push(`console: ${msg.text()}`)
  })
  page.on('pageerror', err => seen.push(`page error: ${err.message}`))
  await page.exposeFunction('__reportViolation', (text: string) => { seen.push(text) })
  await page.addInitScript(() => {
    document.addEventListener('securitypolicyviolation', (e) => {
      (window as unknown as { __reportViolation: (t: string) => void }).__reportViolation(`${e.violatedDirective}: ${e.blockedURI} (${e.sourceFile}:${e.lineNumber})`)
    })
  })
  return seen
}

/** Adds an inline script to the page, as an injection would; whether it ran. */
async function injectScript(page: Page): Promise<boolean> {
  return await page.evaluate(() => {
    const s = document.createElement('script')
    s.textContent = 'window.__injected = true'
    document.head.appendChild(s)
    return (window as unknown as { __injected?: boolean }).__injected === true
  })
}

describe('every page under the Content-Security-Policy, in Chromium', () => {
  let browser: Browser
  let w: World
  const at: Record<string, string> = {}

  beforeAll(async () => {
    ({ browser, w } = await launchWithWorld(async (w) => {
      const c = w.engineer.client
      const t = await newTarget(c, w.build.slug, { name: 'Wheel torque', unit: 'N', threshold: 40 })
      await newRevision(c, w.build.slug, 'R1')
      await newRevision(c, w.build.slug, 'R2')
      await addReading(c, w.build.slug, { revision: 'R1', target: t.key, values: [41, 42, 43], unit: 'N' })
      await addReading(c, w.build.slug, { revision: 'R2', target: t.key, values: [44, 45], unit: 'N' })
      const f = await c.post(`/api/v1/builds/${w.build.slug}/findings`, { title: 'Hub warms after the hill climb', severity: 'degrades' })
      expect(f.status).toBe(201)
      expect((await upload(c, w.build.slug, 'dyno-notes.txt', 'torque log\n')).status).toBe(201)
      at.target = t.key
      at.finding = f.body.id
    }))
  }, 120_000)
  afterAll(async () => {
    await browser?.close()
    await closeTestDb()
  })

  it('public pages report no violation', async () => {
    const context = await newContext(browser)
    const page = await context.newPage()
    const seen = await watchViolations(page)
    for (const path of ['/', '/login', '/signup', '/forgot-password', '/reset-password?token=nothing', '/unsubscribe']) {
      await goto(page, path)
      const res = await page.request.get(path)
      expect(res.headers()['content-security-policy'], path).toContain(`script-src 'self' 'nonce-`)
    }
    expect(seen).toEqual([])
    await context.close()
  }, 120_000)

  it('signed-in pages (teams, build tabs, target, revision, board, finding, compare, files, settings, account…) report no violation', async () => {
    const context = await newContext(browser)
    await signIn(context, w.owner)
    const page = await context.newPage()
    const seen = await watchViolations(page)
    const b = `/builds/${w.build.slug}`
    const pages = [
      '/teams', `/teams/${w.team.slug}`, `/teams/${w.team.slug}/settings`,
      b, `${b}?tab=findings`, `${b}?tab=revisions`, `${b}?tab=files`, `${b}?tab=activity`,
      `${b}/targets/${at.target}`, `${b}/revisions/R1`, `${b}/findings/${at.finding}`, `${b}/compare?a=R1&b=R2`,
      '/fixes', '/digests', '/account',
    ]
    for (const path of pages) {
      await goto(page, path)
      // the page really rendered (not an error page), and its scripts ran: Vue hydrated it
      expect(await page.locator('#__nuxt').count(), path).toBe(1)
    }
    // client-side navigation too: a link click renders the next page without a reload
    await goto(page, b)
    await page.getByTestId('tab-findings').click()
    await page.waitForURL(/tab=findings/)
    await screenshot(page, 'csp-board')
    expect(seen).toEqual([])
    await context.close()
  }, 180_000)

  it('a kept build page, served again under a policy of its scripts\' digests, runs them and refuses an injected one', async () => {
    const context = await newContext(browser)
    await signIn(context, w.owner)
    const page = await context.newPage()
    const seen = await watchViolations(page)
    const b = `/builds/${w.build.slug}`
    for (const path of [b, `${b}/targets/${at.target}`, `${b}/revisions/R1`]) {
      // the first visits settle the cookies (the theme); a page is kept per cookies, so it is served kept from then on
      let headers: Record<string, string> = {}
      for (let visit = 0; visit < 3 && headers['ratchet-cache'] !== 'hit'; visit++) {
        headers = (await page.goto(path, { waitUntil: 'networkidle' }))!.headers()
      }
      expect(headers['ratchet-cache'], path).toBe('hit')
      expect(headers['content-security-policy'], path).toMatch(/script-src 'self'( 'sha256-[A-Za-z0-9+/=]+')+(;|$)/)
      expect(headers['content-security-policy'], path).not.toContain('nonce-')
      await waitForHydration(page)
      expect(await page.locator('#__nuxt').count(), path).toBe(1)
    }
    await goto(page, b)
    await page.getByTestId('tab-findings').click()
    await page.waitForURL(/tab=findings/)
    await page.getByTestId('findings-board').waitFor()
    expect(seen).toEqual([])
    const ran = await injectScript(page)
    expect(ran).toBe(false)
    await expect.poll(() => seen.length).toBeGreaterThan(0)
    await context.close()
  }, 120_000)

  it('an injected inline script is refused (the policy is enforced, not just sent)', async () => {
    const context = await newContext(browser)
    const page = await context.newPage()
    const seen = await watchViolations(page)
    await goto(page, '/login')
    const ran = await injectScript(page)
    expect(ran).toBe(false)
    await expect.poll(() => seen.length).toBeGreaterThan(0)
    expect(seen.join('\n')).toMatch(/script-src/)
    await context.close()
  })
})
