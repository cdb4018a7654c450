import type { Browser, Locator, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, makeWorld, type World } from '../support/api'
import { goto, launchBrowser, newContext, screenshot, signIn } from '../support/browser'

// The findings board in Chromium: drag and drop with real pointer moves, keyboard moves with
// their announcements, a refused move rolled back with its reason, and hostile text that must
// stay text.

const PAYLOAD = '<img src=x onerror="window.__pwned=1">'

/** Press on the card's top-left corner (away from its link and menu), move in steps, release over the lane. */
async function drag(page: Page, card: Locator, lane: Locator) {
  // the lanes' tops just under the sticky bar, so both ends of the drag are in the viewport
  await page.evaluate(() => {
    const el = document.querySelector('[data-testid="board-lanes"]')!
    window.scrollTo(0, el.getBoundingClientRect().top + window.scrollY - 80)
  })
  const a = (await card.boundingBox())!
  const b = (await lane.boundingBox())!
  await page.mouse.move(a.x + 12, a.y + 10)
  await page.mouse.down()
  await page.mouse.move(a.x + 24, a.y + 24, { steps: 4 })
  await page.mouse.move(b.x + b.width / 2, b.y + 30, { steps: 25 })
  await page.mouse.move(b.x + b.width / 2, b.y + 40, { steps: 5 })
  await page.mouse.up()
}

const card = (page: Page, id: string) => page.locator(`[data-testid="finding-card-${id}"]`)
const inLane = (page: Page, lane: string, id: string) => page.locator(`[data-testid="lane-list-${lane}"] [data-testid="finding-card-${id}"]`)

describe('the findings board in Chromium', () => {
  let browser: Browser
  let w: World
  const ids: Record<string, string> = {}

  beforeAll(async () => {
    browser = await launchBrowser()
    w = await makeWorld()
    const c = w.owner.client
    const b = w.build.slug
    await c.post(`/api/v1/builds/${b}/targets`, { key: 'peak_current', name: 'Peak battery current', unit: 'A', comparator: 'atMost', threshold: 30 })
    await c.post(`/api/v1/builds/${b}/revisions`, { label: 'R1' })
    const file = async (key: string, body: Record<string, unknown>) => {
      const res = await c.post(`/api/v1/builds/${b}/findings`, { severity: 'degrades', ...body })
      if (res.status !== 201) throw new Error(`finding ${key}: ${res.status} ${JSON.stringify(res.body)}`)
      ids[key] = res.body.id
    }
    await file('drag', { title: 'Controller whine above 20 km/h', seenOn: 'R1' })
    await file('keys', { title: 'Kickstand bracket flexes', severity: 'cosmetic' })
    await file('safety', { title: 'Battery lug heats at 30 A', severity: 'safety', targets: ['peak_current'] })
    await file('xss', {
      title: `${PAYLOAD} Hostile title`,
      description: `Before <script>window.__pwned=1</script> middle ${PAYLOAD} [a link](javascript:window.__pwned=1) \`<b onmouseover="window.__pwned=1">code</b>\` after`,
    })
    const comment = await c.post(`/api/v1/findings/${ids.xss}/comments`, { body: `Comment start <svg onload="window.__pwned=1"></svg> ${PAYLOAD} @Eno comment end` })
    if (comment.status !== 201) throw new Error(`comment: ${comment.status}`)
  })
  afterAll(async () => {
    await browser?.close()
    await closeTestDb()
  })

  it('drags a card from Spotted to Traced, and finds it there after a reload', async () => {
    const context = await newContext(browser)
    await signIn(context, w.engineer)
    const page = await context.newPage()
    await goto(page, `/builds/${w.build.slug}?tab=findings`)
    await expect(inLane(page, 'spotted', ids.drag!).count()).resolves.toBe(1)
    // safety first in its lane, marked by shape and word
    const spotted = await page.locator('[data-testid="lane-list-spotted"] [data-card-id]').evaluateAll(els => els.map(e => e.getAttribute('data-card-id')))
    expect(spotted[0]).toBe(ids.safety)
    await expect(card(page, ids.safety!).locator('[data-testid="severity-mark"]').innerText()).resolves.toBe('Safety')
    await expect(card(page, ids.safety!).locator('[data-testid="severity-mark"] svg').count()).resolves.toBe(1)
    await screenshot(page, 'findings-board-light')

    const moved = page.waitForResponse(r => r.url().includes(`/api/v1/findings/${ids.drag}/move`))
    await drag(page, card(page, ids.drag!), page.locator('[data-testid="lane-list-traced"]'))
    const res = await moved
    expect(res.status()).toBe(200)
    await expect(inLane(page, 'traced', ids.drag!).count()).resolves.toBe(1)

    await page.reload({ waitUntil: 'networkidle' })
    await expect(inLane(page, 'traced', ids.drag!).count()).resolves.toBe(1)
    await expect(inLane(page, 'spotted', ids.drag!).count()).resolves.toBe(0)
    await expect(page.locator('[data-testid="lane-count-traced"]').innerText()).resolves.toMatch(/^1\b/)

    // filters: by severity, then by text; the counts say how many are hidden
    await page.locator('[data-testid="filter-severity"]').selectOption('safety')
    await expect(page.locator('[data-testid="lane-list-spotted"] [data-card-id]').count()).resolves.toBe(1)
    await expect(page.locator('[data-testid="lane-count-spotted"]').innerText()).resolves.toMatch(/^1 of 3\b/)
    await page.locator('[data-testid="filter-clear"]').click()
    await page.locator('[data-testid="filter-text"]').fill('whine')
    await expect(page.locator('[data-card-id]').evaluateAll(els => els.map(e => e.getAttribute('data-card-id')))).resolves.toEqual([ids.drag])
    await context.close()
  })

  it('moves a card with the keyboard, announces it, and rolls back a refused move with the reason on the card', async () => {
    const context = await newContext(browser)
    await signIn(context, w.engineer)
    const page = await context.newPage()
    await goto(page, `/builds/${w.build.slug}?tab=findings`)
    const live = page.locator('[data-testid="board-live"]')

    await card(page, ids.keys!).focus()
    await page.keyboard.press('Alt+ArrowRight')
    await page.waitForFunction(id => Boolean(document.querySelector(`[data-testid="lane-list-traced"] [data-card-id="${id}"]`)), ids.keys)
    // announced once the server has it
    await page.waitForFunction(() => /moved to Traced/.test(document.querySelector('[data-testid="board-live"]')?.textContent ?? ''))
    await expect(live.innerText()).resolves.toMatch(/^Kickstand bracket flexes: moved to Traced, \d of \d\.$/)
    // focus follows the card
    await page.waitForFunction(id => document.activeElement?.getAttribute('data-card-id') === id, ids.keys)

    await page.keyboard.press('Alt+ArrowRight')
    await page.waitForFunction(() => /moved to On the bench/.test(document.querySelector('[data-testid="board-live"]')?.textContent ?? ''))
    await expect(inLane(page, 'bench', ids.keys!).count()).resolves.toBe(1)
    // into Retest without a landed fix: refused, back on the bench, the reason on the card
    const refusedMove = page.waitForResponse(r => r.url().includes(`/api/v1/findings/${ids.keys}/move`))
    await page.keyboard.press('Alt+ArrowRight')
    expect((await refusedMove).status()).toBe(422)
    await page.waitForSelector(`[data-testid="finding-card-${ids.keys}"] [data-testid="card-refusal"]`)
    await expect(inLane(page, 'bench', ids.keys!).count()).resolves.toBe(1)
    await expect(card(page, ids.keys!).locator('[data-testid="card-refusal"]').innerText()).resolves.toContain('Retest needs a landed fix')
    await expect(live.innerText()).resolves.toContain('was not moved: Retest needs a landed fix')

    // the Move menu does the same by keyboard
    await card(page, ids.keys!).focus()
    await page.keyboard.press('Shift+F10')
    await page.waitForSelector('[data-testid="card-menu"]')
    // (the server's answer is held back until the user has gone on to another card: focus stays there)
    let release!: () => void
    const held = new Promise<void>((resolve) => { release = resolve })
    await page.route(`**/api/v1/findings/${ids.keys}/move`, async (route) => {
      await held
      await route.continue()
    })
    const parked = page.waitForResponse(r => r.url().includes(`/api/v1/findings/${ids.keys}/move`))
    await page.locator('[data-testid="card-to-parked"]').click()
    await page.waitForFunction(id => Boolean(document.querySelector(`[data-testid="lane-list-parked"] [data-card-id="${id}"]`)), ids.keys)
    await card(page, ids.xss!).focus()
    release()
    expect((await parked).status()).toBe(200)
    await page.waitForFunction(() => /moved to Parked/.test(document.querySelector('[data-testid="board-live"]')?.textContent ?? ''))
    await page.unroute(`**/api/v1/findings/${ids.keys}/move`)
    // the move's own follow-up (refresh, then focus) runs in the next few ticks: let two frames pass
    await page.evaluate(() => new Promise(resolve => requestAnimationFrame(() => requestAnimationFrame(resolve))))
    await expect(page.evaluate(() => document.activeElement?.getAttribute('data-card-id'))).resolves.toBe(ids.xss)

    // someone else moves a card meanwhile: the stale move is refused, and the card shows where it is now and why
    const other = await w.owner.client.post(`/api/v1/findings/${ids.xss}/move`, { lane: 'bench', version: 1 })
    expect(other.status).toBe(200)
    const stale = page.waitForResponse(r => r.url().includes(`/api/v1/findings/${ids.xss}/move`))
    await page.keyboard.press('Alt+ArrowRight')
    expect((await stale).status()).toBe(409)
    await page.waitForSelector(`[data-testid="lane-list-bench"] [data-testid="finding-card-${ids.xss}"] [data-testid="card-refusal"]`)
    await expect(card(page, ids.xss!).locator('[data-testid="card-refusal"]').innerText()).resolves.toMatch(/changed since you loaded it .* Olu Owner moved it to On the bench/)
    await context.close()
  })

  it('files a finding from a target card, with the target and caution filled in', async () => {
    const context = await newContext(browser)
    await signIn(context, w.engineer)
    const page = await context.newPage()
    await goto(page, `/builds/${w.build.slug}`)
    // the card lists the open finding that hurts it
    await expect(page.locator('[data-testid="target-findings-peak_current"]').innerText()).resolves.toContain('Battery lug heats at 30 A')
    await page.locator('[data-testid="file-finding-peak_current"]').click()
    await page.waitForSelector('[data-testid="finding-form"]')
    expect(await page.locator('[data-testid="finding-target-peak_current"]').isChecked()).toBe(true)
    await page.locator('[data-testid="finding-title"]').fill('Pack fuse holder warm')
    await page.locator('[data-testid="finding-severity-safety"]').check()
    await expect(page.locator('[data-testid="finding-form"] [data-testid="caution"]').innerText()).resolves.toContain('local codes and licensed practice')
    const created = page.waitForResponse(r => r.url().endsWith(`/api/v1/builds/${w.build.slug}/findings`) && r.request().method() === 'POST')
    await page.locator('[data-testid="finding-save"]').click()
    const res = await created
    expect(res.status()).toBe(201)
    const id = (await res.json()).id as string
    await page.waitForSelector(`[data-testid="lane-list-spotted"] [data-testid="finding-card-${id}"]`)
    await expect(card(page, id).innerText()).resolves.toContain('peak_current')
    await context.close()
  })

  it('keeps script and event-handler payloads inert, and shows the text', async () => {
    const context = await newContext(browser, { colorScheme: 'dark' })
    await signIn(context, w.reviewer)
    const page = await context.newPage()
    const dialogs: string[] = []
    page.on('dialog', (d) => {
      dialogs.push(d.message())
      void d.dismiss()
    })

    await goto(page, `/builds/${w.build.slug}?tab=findings`)
    await expect(card(page, ids.xss!).locator('[data-testid="card-title"]').innerText()).resolves.toBe(`${PAYLOAD} Hostile title`)
    await screenshot(page, 'findings-board-dark')

    await goto(page, `/builds/${w.build.slug}/findings/${ids.xss}`)
    await expect(page.locator('[data-testid="finding-title"]').innerText()).resolves.toBe(`${PAYLOAD} Hostile title`)
    const description = page.locator('[data-testid="finding-description"]')
    const text = await description.innerText()
    expect(text).toMatch(/^Before\s+middle/)
    expect(text).toContain('a link')
    // the code span shows the markup as text
    expect(text).toContain('<b onmouseover="window.__pwned=1">code</b>')
    expect(text).toMatch(/after$/)
    await expect(description.locator('script, img, svg, iframe, [onerror], [onmouseover]').count()).resolves.toBe(0)
    expect(await description.locator('a').getAttribute('href')).toBeNull()

    const comment = page.locator('[data-testid="comment-body"]').first()
    await expect(comment.innerText()).resolves.toMatch(/^Comment start\s+@Eno comment end$/)
    await expect(page.locator('[data-testid="comment-mentions"]').innerText()).resolves.toBe('Mentions: Eno Engineer')

    // hover and click everything that could carry a handler
    await description.hover()
    await description.locator('code').hover()
    await page.locator('[data-testid="finding-title"]').click()
    await screenshot(page, 'finding-detail-dark')
    expect(await page.evaluate(() => (window as unknown as { __pwned?: number }).__pwned)).toBeUndefined()
    expect(dialogs).toEqual([])
    await context.close()
  })

  it('works a finding on its page: a fix, a comment with a mention, the history', async () => {
    const context = await newContext(browser)
    await signIn(context, w.engineer)
    const page = await context.newPage()
    await goto(page, `/builds/${w.build.slug}/findings/${ids.drag}`)
    await page.locator('[data-testid="fix-add"]').click()
    await page.locator('[data-testid="fix-description"]').fill('Shielded motor cable, ferrite at the controller')
    await page.locator('[data-testid="fix-owner"]').selectOption({ label: 'Eno Engineer' })
    await page.locator('[data-testid="fix-due"]').fill('2027-02-01')
    await page.locator('[data-testid="fix-state"]').selectOption('landed')
    await expect(page.locator('[data-testid="fix-landed"]').inputValue()).resolves.toBe('R1')
    await page.locator('[data-testid="fix-save"]').click()
    await page.waitForSelector('[data-testid="fix-state-word"]')
    await expect(page.locator('[data-testid="fix-list"]').innerText()).resolves.toMatch(/Shielded motor cable[\s\S]*Eno Engineer · due 2027-02-01 · landed in R1[\s\S]*Landed/)

    await page.locator('[data-testid="comment-input"]').fill('Landed in R1, @Rae please look at the **scope capture**')
    await page.locator('[data-testid="comment-save"]').click()
    await page.waitForSelector('[data-testid="comment-mentions"]')
    await expect(page.locator('[data-testid="comment-body"] strong').innerText()).resolves.toBe('scope capture')
    await expect(page.locator('[data-testid="comment-mentions"]').innerText()).resolves.toBe('Mentions: Rae Reviewer')

    // moving to Retest is allowed now that a fix has landed; the history says who did what
    await page.locator('[data-testid="finding-move-to"]').selectOption('retest')
    await page.locator('[data-testid="finding-move"]').click()
    await page.waitForFunction(() => document.querySelector('[data-testid="finding-lane"]')?.textContent?.includes('Retest'))
    const history = await page.locator('[data-testid="history"]').innerText()
    expect(history).toMatch(/Eno Engineer moved it from Traced to Retest/)
    expect(history).toMatch(/Eno Engineer added the fix “Shielded motor cable, ferrite at the controller” for Eno Engineer, landed in R1/)
    await screenshot(page, 'finding-detail-light')
    await context.close()
  })

  it('shows My fixes, overdue marked', async () => {
    const fix = await w.engineer.client.post(`/api/v1/findings/${ids.safety}/fixes`, { description: 'Crimp lugs sized for the cable', ownerId: w.engineer.user.id, dueOn: '2020-02-01' })
    expect(fix.status).toBe(201)
    const context = await newContext(browser)
    await signIn(context, w.engineer)
    const page = await context.newPage()
    await goto(page, '/fixes')
    const row = page.locator(`[data-testid="my-fix-${fix.body.id}"]`)
    await expect(row.getAttribute('data-overdue')).resolves.toBe('true')
    await expect(row.locator('[data-testid="my-fix-due"]').innerText()).resolves.toMatch(/^Overdue: was due \d+ days ago$/)
    await screenshot(page, 'my-fixes-light')
    await context.close()
  })
})
