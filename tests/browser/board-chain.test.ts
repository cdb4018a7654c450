import type { Browser, Page, Request } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, type World } from '../support/api'
import { goto, launchWithWorld, newContext, screenshot, signedInPage, waitForHydration } from '../support/browser'
import { addReading, newRevision } from '../support/measure'

// A finding's page as its proof chain (finding → targets it hurts → fixes → the verifying reading),
// the board's roving focus, the error page's theme, the loading bar, and the app's requests: none
// aborted after signing in or leaving a target page, no identical GET twice in flight.

const mustCreate = async (res: Promise<{ status: number, body: any }>, what: string) => {
  const r = await res
  if (r.status !== 201) throw new Error(`${what}: ${r.status} ${JSON.stringify(r.body)}`)
  return r.body
}

/** Requests that failed (aborted included) and GETs asked again while the same one was still in flight. */
function watchRequests(page: Page) {
  const failed: string[] = []
  const duplicates: string[] = []
  const inFlight = new Map<string, number>()
  const key = (r: Request) => `${r.method()} ${r.url()}`
  const done = (r: Request) => inFlight.set(key(r), (inFlight.get(key(r)) ?? 1) - 1)
  page.on('request', (r) => {
    if (r.method() !== 'GET' || !new URL(r.url()).pathname.startsWith('/api/')) return
    if ((inFlight.get(key(r)) ?? 0) > 0) duplicates.push(key(r))
    inFlight.set(key(r), (inFlight.get(key(r)) ?? 0) + 1)
  })
  page.on('requestfinished', done)
  page.on('requestfailed', (r) => {
    failed.push(`${key(r)}: ${r.failure()?.errorText ?? 'failed'}`)
    done(r)
  })
  return { failed, duplicates }
}

describe('finding pages, the board\'s keys and the app\'s requests in Chromium', () => {
  let browser: Browser
  let w: World
  const ids: Record<string, string> = {}
  const TARGETS = ['peak_current', 'top_speed', 'range', 'mass', 'brake_distance', 'motor_temp', 'charge_time']

  beforeAll(async () => {
    ({ browser, w } = await launchWithWorld(async (w) => {
      const c = w.owner.client
      const b = w.build.slug
      await mustCreate(c.post(`/api/v1/builds/${b}/targets`, { key: 'peak_current', name: 'Peak battery current', unit: 'A', comparator: 'atMost', threshold: 30 }), 'target')
      // a strip of seven cards: each asks for the build's open findings
      for (const key of TARGETS.slice(1)) await mustCreate(c.post(`/api/v1/builds/${b}/targets`, { key, name: key.replace('_', ' '), unit: 'kg', comparator: 'atMost', threshold: 10 }), key)
      await newRevision(c, b, 'R1')
      await newRevision(c, b, 'R2')
      // invented demo numbers: short on R1, well inside the limit on R2
      await addReading(c, b, { revision: 'R1', target: 'peak_current', values: [33.1, 33.8, 33.4, 33.6], unit: 'A' })
      await addReading(c, b, { revision: 'R2', target: 'peak_current', values: [24.2, 24.9, 24.5, 24.6], unit: 'A' })
      const verified = await mustCreate(c.post(`/api/v1/builds/${b}/findings`, { title: 'Pack draws over the limit on the climb', severity: 'blocks-target', seenOn: 'R1', targets: ['peak_current'] }), 'finding')
      ids.verified = verified.id
      await mustCreate(c.post(`/api/v1/findings/${verified.id}/fixes`, { description: 'Current limit lowered in the controller', ownerId: w.engineer.user.id, state: 'landed', landedIn: 'R2' }), 'fix')
      const open = await mustCreate(c.post(`/api/v1/builds/${b}/findings`, { title: 'Fork rattles on gravel', severity: 'degrades', seenOn: 'R2', targets: ['mass'] }), 'finding')
      ids.open = open.id
      ids.third = (await mustCreate(c.post(`/api/v1/builds/${b}/findings`, { title: 'Stand scuffs the paint', severity: 'cosmetic' }), 'finding')).id
      await mustCreate(c.post(`/api/v1/builds/${b}/findings`, { title: 'Brake lever loose', severity: 'degrades' }), 'finding')
      const moved = await c.post(`/api/v1/findings/${open.id}/move`, { lane: 'traced', version: 1 })
      if (moved.status !== 200) throw new Error(`move: ${moved.status}`)
    }))
  })
  afterAll(async () => {
    await browser?.close()
    await closeTestDb()
  })

  it('lays a finding out as its proof chain, in order, ending with the reading that verified it', async () => {
    const { context, page } = await signedInPage(browser, w.engineer)
    await goto(page, `/builds/${w.build.slug}/findings/${ids.verified}`)
    const steps = await page.locator('[data-testid="proof-chain"] > li').evaluateAll(els => els.map(e => e.getAttribute('data-step')))
    expect(steps).toEqual(['finding', 'targets', 'fixes', 'verification'])
    // every step holds up: each notch solid
    await expect(page.locator('[data-testid="proof-chain"] > li').evaluateAll(els => els.map(e => e.getAttribute('data-done')))).resolves.toEqual(['true', 'true', 'true', 'true'])

    const squash = async (sel: string) => (await page.locator(sel).innerText()).replace(/\s+/g, ' ').trim()
    await expect(squash('[data-testid="finding-facts"]')).resolves.toBe('Seen on R1 · filed by Olu Owner')
    // the target with its rule and its latest number (mean of 24.2, 24.9, 24.5, 24.6 = 24.55)
    const target = await squash('[data-testid="finding-target-peak_current"]')
    expect(target).toMatch(/^Peak battery current target ≤ 30 A · now 24\.\d+ ± [\d.]+ A on R2 Met$/)
    await expect(squash('[data-testid="chain-fixes-state"]')).resolves.toBe('1 of 1 landed in R2')
    await expect(squash('[data-testid="chain-verification-state"]')).resolves.toBe('on R2')
    const verification = await squash('[data-testid="finding-verification"]')
    expect(verification).toMatch(/^Met Verified by the readings of R2: .+\. Peak battery current 24\.\d+ ± [\d.]+ A Met$/)

    // the conversation sits beside the chain on a wide screen, below it on a phone
    await page.setViewportSize({ width: 1440, height: 900 })
    const chain = (await page.locator('[data-testid="proof-chain"]').boundingBox())!
    const talk = (await page.locator('[data-testid="comments"]').boundingBox())!
    expect(talk.x).toBeGreaterThan(chain.x + chain.width - 1)
    await screenshot(page, 'finding-chain-1440-light')
    await page.setViewportSize({ width: 390, height: 844 })
    const chainPhone = (await page.locator('[data-testid="proof-chain"]').boundingBox())!
    const talkPhone = (await page.locator('[data-testid="comments"]').boundingBox())!
    expect(talkPhone.y).toBeGreaterThan(chainPhone.y + chainPhone.height - 1)
    expect(await page.evaluate(() => document.documentElement.scrollWidth)).toBeLessThanOrEqual(390)
    await screenshot(page, 'finding-chain-390-light')

    // the formatting help is folded away, not a line under the box
    await expect(page.locator('[data-testid="comment-formatting"]').getAttribute('open')).resolves.toBeNull()
    await context.close()
  })

  it('says "not yet verified" on a finding with no landed fix, in the dark theme too', async () => {
    const { context, page } = await signedInPage(browser, w.reviewer, { colorScheme: 'dark' })
    await page.setViewportSize({ width: 1440, height: 900 })
    await goto(page, `/builds/${w.build.slug}/findings/${ids.open}`)
    await expect(page.locator('[data-testid="chain-verification-state"]').innerText()).resolves.toBe('not yet verified')
    await expect(page.locator('[data-testid="chain-fixes"]').getAttribute('data-done')).resolves.toBe('false')
    await expect(page.locator('[data-testid="finding-verification"]').innerText()).resolves.toMatch(/Not yet verified\./)
    await screenshot(page, 'finding-chain-1440-dark')
    await page.setViewportSize({ width: 390, height: 844 })
    await screenshot(page, 'finding-chain-390-dark')
    await context.close()
  })

  it('gives each lane one tab stop; the arrow keys move inside and across lanes', async () => {
    const { context, page } = await signedInPage(browser, w.engineer)
    await page.setViewportSize({ width: 1440, height: 900 })
    await goto(page, `/builds/${w.build.slug}?tab=findings`)
    const stops = () => page.locator('[data-card-id][tabindex="0"]').evaluateAll(els => els.map(e => e.getAttribute('data-card-id')))
    const spotted = await page.locator('[data-testid="lane-list-spotted"] [data-card-id]').evaluateAll(els => els.map(e => e.getAttribute('data-card-id')!))
    const traced = await page.locator('[data-testid="lane-list-traced"] [data-card-id]').evaluateAll(els => els.map(e => e.getAttribute('data-card-id')!))
    expect(spotted).toHaveLength(3)
    expect(traced).toEqual([ids.open])
    // Spotted and Traced have cards: one stop each, their first card
    await expect(stops()).resolves.toEqual([spotted[0], ids.open])
    // the other cards' links and buttons are not tab stops either
    await expect(page.locator(`[data-card-id="${spotted[1]}"] a, [data-card-id="${spotted[1]}"] button`).evaluateAll(els => els.map(e => (e as HTMLElement).tabIndex))).resolves.toEqual([-1, -1])

    const focused = () => page.evaluate(() => document.activeElement?.closest('[data-card-id]')?.getAttribute('data-card-id') ?? document.activeElement?.tagName)
    await page.locator(`[data-card-id="${spotted[0]}"]`).focus()
    await page.keyboard.press('ArrowDown')
    await expect(focused()).resolves.toBe(spotted[1])
    await page.keyboard.press('End')
    await expect(focused()).resolves.toBe(spotted[2])
    // the lane remembers where you were: that card is now its stop
    await expect(stops()).resolves.toEqual([spotted[2], ids.open])
    await page.keyboard.press('ArrowRight')
    await expect(focused()).resolves.toBe(ids.open)
    await page.keyboard.press('ArrowLeft')
    await expect(focused()).resolves.toBe(spotted[0])
    await page.keyboard.press('Home')
    await expect(focused()).resolves.toBe(spotted[0])
    // Tab leaves the card through its own link and Move button, then on to the next lane's stop
    await page.keyboard.press('Tab')
    await page.keyboard.press('Tab')
    await page.keyboard.press('Tab')
    await expect(page.evaluate(() => document.activeElement?.getAttribute('data-card-id'))).resolves.toBe(ids.open)
    // Enter on a card opens its finding
    await page.keyboard.press('Enter')
    await page.waitForURL(`**/findings/${ids.open}`)
    await context.close()
  })

  it('keeps every Move button inside its card, comment count or not', async () => {
    for (const id of [ids.verified, ids.open]) {
      const c = await w.owner.client.post(`/api/v1/findings/${id}/comments`, { body: 'Checked on the bench.' })
      expect(c.status).toBe(201)
    }
    const { context, page } = await signedInPage(browser, w.engineer)
    for (const width of [1440, 390]) {
      await page.setViewportSize({ width, height: 900 })
      await goto(page, `/builds/${w.build.slug}?tab=findings`)
      const outside = await page.locator('[data-card-id]').evaluateAll(cards => cards.flatMap((card) => {
        const box = card.getBoundingClientRect()
        const move = card.querySelector('[data-testid="card-move-menu"]')!.getBoundingClientRect()
        return move.right > box.right + 0.5 || move.left < box.left - 0.5 ? [card.getAttribute('data-card-id')] : []
      }))
      expect(outside).toEqual([])
      await screenshot(page, `findings-board-${width}-light`)
    }
    // the help explains the marks, each drawn beside its meaning
    await page.setViewportSize({ width: 1440, height: 900 })
    await page.locator('[data-testid="board-marks"] summary').click()
    const marks = page.locator('[data-testid="board-marks"]')
    await expect(marks.locator('[data-testid="lane-mark"]').count()).resolves.toBe(6)
    await expect(marks.locator('[data-testid="severity-mark"]').evaluateAll(els => els.map(e => e.getAttribute('data-teeth')))).resolves.toEqual(['4', '3', '2', '1'])
    await screenshot(page, 'findings-board-marks-help')
    await context.close()
  })

  it('aborts no request and asks no GET twice at once, after signing in and leaving a target page', async () => {
    const context = await newContext(browser)
    const page = await context.newPage()
    await page.setViewportSize({ width: 1440, height: 900 })
    const seen = watchRequests(page)
    await goto(page, `/login?next=${encodeURIComponent(`/builds/${w.build.slug}`)}`)
    await page.locator('input[name="email"]').fill(w.engineer.email)
    await page.locator('input[name="password"]').fill(w.engineer.password)
    await page.locator('[data-testid="login-submit"]').click()
    await page.waitForURL(`**/builds/${w.build.slug}`)
    await page.waitForLoadState('networkidle')
    await page.locator('[data-testid="target-findings-peak_current"]').waitFor()
    expect(seen.failed).toEqual([])
    expect(seen.duplicates).toEqual([])

    // into a target page and back out to the build through the app's own links
    await page.locator(`a[href="/builds/${w.build.slug}/targets/peak_current"]`).first().click()
    await page.waitForURL('**/targets/peak_current')
    await page.waitForLoadState('networkidle')
    await page.goBack()
    await page.waitForURL(`**/builds/${w.build.slug}`)
    await page.waitForLoadState('networkidle')
    await page.locator(`a[href="/builds/${w.build.slug}/targets/top_speed"]`).first().click()
    await page.waitForURL('**/targets/top_speed')
    await page.waitForLoadState('networkidle')
    expect(seen.failed).toEqual([])
    expect(seen.duplicates).toEqual([])
    await context.close()
  })

  it('aborts no request when signing in lands on the teams, then walks to a build', async () => {
    const context = await newContext(browser)
    const page = await context.newPage()
    await page.setViewportSize({ width: 1440, height: 900 })
    const seen = watchRequests(page)
    await goto(page, '/login')
    await page.locator('input[name="email"]').fill(w.owner.email)
    await page.locator('input[name="password"]').fill(w.owner.password)
    await page.locator('[data-testid="login-submit"]').click()
    await page.waitForURL('**/teams')
    await page.waitForLoadState('networkidle')
    await page.locator(`a[href="/teams/${w.team.slug}"]`).first().click()
    await page.waitForURL(`**/teams/${w.team.slug}`)
    await page.waitForLoadState('networkidle')
    await page.locator(`a[href="/builds/${w.build.slug}"]`).first().click()
    await page.waitForURL(`**/builds/${w.build.slug}`)
    await page.waitForLoadState('networkidle')
    await page.locator('[data-testid="target-findings-peak_current"]').waitFor()
    expect(seen.failed).toEqual([])
    expect(seen.duplicates).toEqual([])
    await context.close()
  })

  it('shows a loading bar in the accent colour while a slow page loads', async () => {
    const { context, page } = await signedInPage(browser, w.engineer)
    await goto(page, `/builds/${w.build.slug}`)
    await page.route('**/api/v1/findings/**', async (route) => {
      await new Promise(resolve => setTimeout(resolve, 1500))
      await route.continue()
    })
    await page.locator(`a[href^="/builds/${w.build.slug}/findings/"]`).first().click()
    const bar = page.locator('.nuxt-loading-indicator')
    await page.waitForFunction(() => Number(getComputedStyle(document.querySelector('.nuxt-loading-indicator')!).opacity) > 0.5, null, { timeout: 1000 })
    expect(await bar.evaluate(el => getComputedStyle(el).backgroundImage + getComputedStyle(el).backgroundColor)).toMatch(/26, 156, 142/)
    await page.waitForURL('**/findings/**')
    await page.unroute('**/api/v1/findings/**')
    await context.close()
  })

  it('shows the error page in the dark theme when the system is dark, and names the team settings link honestly', async () => {
    const context = await newContext(browser, { colorScheme: 'dark' })
    const page = await context.newPage()
    const res = await page.goto('/no/such/page', { waitUntil: 'networkidle' })
    expect(res?.status()).toBe(404)
    await waitForHydration(page)
    await expect(page.evaluate(() => document.documentElement.classList.contains('dark'))).resolves.toBe(true)
    const bg = await page.evaluate(() => getComputedStyle(document.body).backgroundColor)
    const [r, g, b] = bg.match(/\d+/g)!.map(Number)
    expect(r! + g! + b!).toBeLessThan(3 * 60)
    await screenshot(page, 'not-found-dark')
    await context.close()

    const signed = await signedInPage(browser, w.engineer)
    await goto(signed.page, `/builds/${w.build.slug}`)
    await expect(signed.page.locator('[data-testid="tab-settings"]').innerText()).resolves.toMatch(/^Team settings/)
    await signed.context.close()
  })
})
