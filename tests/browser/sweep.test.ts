import { writeFileSync } from 'node:fs'
import type { Browser, BrowserContext, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, mustSucceed, testDb, type World } from '../support/api'
import { ARTIFACTS, axeViolations, goto, launchWithWorld, newContext, screenshot, signIn } from '../support/browser'

// Every page, at a desktop (1440×900) and a phone (390×844) size, in the light and the dark theme:
// the page never scrolls sideways (whatever is wider scrolls inside its own box), and axe-core
// finds no serious or critical break of WCAG 2.1 A and AA. Screenshots land in tests/artifacts/.
// A build with eleven targets, so the strip is far wider than any window.

const SIZES = [{ name: '1440', width: 1440, height: 900 }, { name: '390', width: 390, height: 844 }] as const
const THEMES = ['light', 'dark'] as const
const WCAG = ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa']
// structure rules axe files under best practice rather than WCAG, checked once per page: headings
// in order, no two landmarks of one name, no table heading without text
const STRUCTURE = ['heading-order', 'landmark-unique', 'empty-table-header']

const TARGETS = [
  { key: 'top_speed', name: 'Assisted top speed', unit: 'km/h', comparator: 'between', threshold: 24, thresholdHigh: 25 },
  { key: 'wheel_torque', name: 'Continuous wheel torque', unit: 'N·m', comparator: 'atLeast', threshold: 40, noiseBand: 0.5 },
  { key: 'hub_mass', name: 'Hub mass', unit: 'kg', comparator: 'atMost', threshold: 4.5 },
  { key: 'case_temp', name: 'Motor case temperature after the climb', unit: '°C', comparator: 'atMost', threshold: 70 },
  { key: 'range', name: 'Range on one charge', unit: 'km', comparator: 'atLeast', threshold: 40 },
  { key: 'vibration', name: 'Bearing vibration', unit: 'mm/s', comparator: 'atMost', threshold: 4.5 },
  { key: 'peak_current', name: 'Peak phase current', unit: 'A', comparator: 'atMost', threshold: 30 },
  { key: 'efficiency', name: 'Drive efficiency', unit: '%', comparator: 'atLeast', threshold: 80 },
  { key: 'backlash', name: 'Gear backlash', unit: '°', comparator: 'atMost', threshold: 1.5 },
  { key: 'climb_time', name: 'Time up the test hill', unit: 's', comparator: 'atMost', threshold: 95 },
  { key: 'seal_leak', name: 'Seal leak rate', unit: 'mL/min', comparator: 'atMost', threshold: 0.5 },
]

let findingId = ''

async function arrange(w: World) {
  const c = w.owner.client
  const b = w.build.slug
  await mustSucceed(c.patch(`/api/v1/builds/${b}`, { name: 'Trailhopper', summary: 'Hub drive unit of an electric cargo trike' }), 'rename build')
  for (const t of TARGETS) await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, t), `target ${t.key}`)
  await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, { label: 'R1', summary: 'First hub motor on the bench', changes: ['spur gear set'] }), 'R1')
  await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, { label: 'R2', summary: 'Helical gears', changes: ['helical gear set instead of spur'] }), 'R2')
  const readings = [
    { revision: 'R1', target: 'top_speed', values: [23.0, 23.4, 23.2], unit: 'km/h' },
    { revision: 'R2', target: 'top_speed', values: [24.5, 24.6, 24.4], unit: 'km/h' },
    { revision: 'R1', target: 'wheel_torque', values: [38, 39, 40], unit: 'N·m' },
    { revision: 'R2', target: 'wheel_torque', values: [42, 42.5, 43], unit: 'N·m' },
    { revision: 'R1', target: 'hub_mass', values: [4.8, 4.9], unit: 'kg' },
    { revision: 'R2', target: 'hub_mass', values: [4.81, 4.79], unit: 'kg' },
    { revision: 'R1', target: 'case_temp', values: [68, 72, 70], unit: '°C' },
    { revision: 'R2', target: 'case_temp', values: [75, 77, 76], unit: '°C' },
  ]
  for (const r of readings) await mustSucceed(c.post(`/api/v1/builds/${b}/readings`, r), `reading ${r.target} ${r.revision}`)
  const finding = await mustSucceed(c.post(`/api/v1/builds/${b}/findings`, { title: 'Motor case runs hot on the long climb', severity: 'degrades' }), 'finding')
  findingId = finding.body.id
  await mustSucceed(c.post(`/api/v1/findings/${findingId}/fixes`, { description: 'Add cooling fins to the case', ownerId: w.engineer.user.id, dueOn: '2027-01-15' }), 'fix')
  await mustSucceed(c.post(`/api/v1/findings/${findingId}/comments`, { body: 'Seen again on the dyno after 20 minutes.' }), 'comment')
  // the team carries the demo mark, so its badge is checked too
  await testDb()('teams').where({ id: w.team.id }).update({ demo: true })
}

/**
 * How far the document scrolls sideways beyond the window, in CSS pixels (0 when it doesn't), and
 * the outermost elements that stick out of it (those not inside a box that scrolls or clips).
 */
const overflow = async (page: Page) => await page.evaluate(() => {
  const s = document.scrollingElement!
  // inside a box that scrolls or clips it: an absolutely placed element only by a box at or
  // above its containing block (the nearest placed ancestor)
  const clipped = (e: HTMLElement) => {
    const position = getComputedStyle(e).position
    if (position === 'fixed') return false
    const from = position === 'absolute' ? e.offsetParent : e.parentElement
    for (let p = from; p && p !== document.body; p = p.parentElement) {
      if (getComputedStyle(p).overflowX !== 'visible') return true
    }
    return false
  }
  const out = [...document.body.querySelectorAll<HTMLElement>('*')]
    .filter(e => e.getBoundingClientRect().right > s.clientWidth + 1 && !clipped(e))
    .filter((e, _, all) => !all.some(o => o !== e && o.contains(e)))
    .slice(0, 4)
    .map(e => `${e.tagName.toLowerCase()}${e.getAttribute('data-testid') ? `[data-testid=${e.getAttribute('data-testid')}]` : ''}.${String(e.className).split(' ').slice(0, 4).join('.')}`)
  return { px: s.scrollWidth - s.clientWidth, out }
})

/** Serious and critical breaks of WCAG 2.1 A/AA in the page. */
async function seriousViolations(page: Page): Promise<string[]> {
  return (await axeViolations(page, undefined, { type: 'tag', values: WCAG })).filter(v => /\((serious|critical)\)/.test(v))
}

describe('every page in Chromium, two sizes, two themes', () => {
  let browser: Browser
  let w: World
  const contexts: BrowserContext[] = []
  beforeAll(async () => { ({ browser, w } = await launchWithWorld(arrange)) }, 120_000)
  afterAll(async () => {
    await browser?.close()
    await closeTestDb()
  })

  it('never scrolls the page sideways and has no serious or critical WCAG 2.1 AA violation', async () => {
    const b = `/builds/${w.build.slug}`
    const signedOut = ['/', '/login', '/signup', '/forgot-password', '/reset-password?token=not-a-real-token']
    const signedIn = [
      '/teams', `/teams/${w.team.slug}`, `/teams/${w.team.slug}/settings`,
      b, `${b}?tab=findings`, `${b}?tab=revisions`, `${b}?tab=design`, `${b}?tab=files`, `${b}?tab=activity`,
      `${b}/targets/case_temp`, `${b}/revisions/R2`, `${b}/compare?a=R1&b=R2`, `${b}/findings/${findingId}`,
      '/fixes', '/digests', '/account', '/api/v1/docs', '/no-such-page',
    ]
    const names = (path: string) => (path.replace(/^\//, '').replace(/[^a-z0-9]+/gi, '-').replace(/-+$/, '') || 'landing')
      .replace(w.build.slug, 'build').replace(w.team.slug, 'team').replace(findingId, 'finding')

    // one theme: a context signed out and one signed in, one page each, each path loaded once and
    // looked at in both sizes
    async function sweep(theme: typeof THEMES[number]): Promise<string[]> {
      const problems: string[] = []
      const out = await newContext(browser, { colorScheme: theme })
      const inside = await newContext(browser, { colorScheme: theme })
      contexts.push(out, inside)
      await signIn(inside, w.owner)
      for (const [context, paths] of [[out, signedOut], [inside, signedIn]] as const) {
        const page = await context.newPage()
        for (const path of paths) {
          await page.setViewportSize(SIZES[0])
          // the API reference is a static page of the server (with a light look only), not one of the app's
          const app = !path.startsWith('/api/')
          if (app) await goto(page, path)
          else await page.goto(path, { waitUntil: 'networkidle' })
          if (app && theme === 'dark') await page.waitForFunction(() => document.documentElement.classList.contains('dark'))
          for (const size of SIZES) {
            await page.setViewportSize(size)
            await page.evaluate(() => new Promise(r => requestAnimationFrame(() => requestAnimationFrame(r))))
            const where = `${path} at ${size.name} ${theme}`
            const wide = await overflow(page)
            if (wide.px > 0) problems.push(`${where}: the page scrolls ${wide.px} px sideways (${wide.out.join(', ')})`)
            for (const v of await seriousViolations(page)) problems.push(`${where}: ${v}`)
            if (theme === 'light' && size === SIZES[0] && app) {
              for (const v of await axeViolations(page, undefined, { type: 'rule', values: STRUCTURE })) problems.push(`${where}: ${v}`)
            }
            await screenshot(page, `sweep-${names(path)}-${size.name}-${theme}`)
          }
        }
        await page.close()
      }
      return problems
    }
    // the two themes side by side: much of a page load is waiting
    const problems = (await Promise.all(THEMES.map(sweep))).flat()
    writeFileSync(`${ARTIFACTS}/sweep-problems.txt`, problems.join('\n'))
    expect(problems).toEqual([])
  }, 600_000)

  it('skip links: Tab once and Enter lands in the main content; on the findings tab the next stop skips to the board', async () => {
    const context = await newContext(browser)
    contexts.push(context)
    await signIn(context, w.engineer)
    const page = await context.newPage()
    await page.setViewportSize({ width: 1440, height: 900 })
    const focused = async () => await page.evaluate(() => {
      const el = document.activeElement as HTMLElement
      const r = el.getBoundingClientRect()
      return { testid: el.getAttribute('data-testid'), id: el.id, inMain: Boolean(el.closest('main')), inBoard: Boolean(el.closest('#board')), width: r.width, top: r.top }
    })

    await goto(page, `/builds/${w.build.slug}?tab=findings`)
    await page.keyboard.press('Tab')
    const skip = await focused()
    expect(skip.testid).toBe('skip-to-main')
    // hidden until focused, then on screen
    expect(skip.width).toBeGreaterThan(40)
    expect(skip.top).toBeGreaterThanOrEqual(0)
    await page.keyboard.press('Enter')
    await expect.poll(async () => (await focused()).id).toBe('main')

    // the next stop is the way past the header and the strip's eleven cards
    await page.keyboard.press('Tab')
    const toBoard = await focused()
    expect(toBoard.testid).toBe('skip-to-board')
    expect(toBoard.width).toBeGreaterThan(40)
    await page.keyboard.press('Enter')
    await expect.poll(async () => (await focused()).id).toBe('board')
    await page.keyboard.press('Tab')
    expect((await focused()).inBoard).toBe(true)

    // the top navigation's focus ring is drawn whole: the ring (2 px) and its offset (2 px) fit
    // inside the navigation's scrolling box on every side
    await page.getByRole('link', { name: 'Teams', exact: true }).focus()
    const fits = await page.evaluate(() => {
      const link = document.activeElement!.getBoundingClientRect()
      const nav = document.querySelector('nav[aria-label="Main"]')!.getBoundingClientRect()
      return [link.left - 4 >= nav.left, link.right + 4 <= nav.right, link.top - 4 >= nav.top, link.bottom + 4 <= nav.bottom]
    })
    expect(fits).toEqual([true, true, true, true])
  })

  it('the strip says what its arrows do, offers Undo after a move, and brings a new target into view', async () => {
    const context = await newContext(browser)
    contexts.push(context)
    await signIn(context, w.engineer)
    const page = await context.newPage()
    await page.setViewportSize({ width: 390, height: 844 })
    await goto(page, `/builds/${w.build.slug}`)
    const order = async () => await page.locator('[data-testid="target-strip"] article').evaluateAll(els => els.map(e => e.getAttribute('data-testid')!.replace('target-card-', '')))
    const before = await order()
    expect(before).toEqual(TARGETS.map(t => t.key))

    const right = page.locator('[data-testid="target-card-top_speed"] [data-move="1"]')
    await expect(right.innerText()).resolves.toMatch(/^Move right/)
    expect(await right.evaluate(b => b.textContent!.replace(/\s+/g, ' ').trim())).toBe('Move right: Assisted top speed →')
    const saved = page.waitForResponse(r => r.url().endsWith('/targets/order'))
    await right.click()
    expect((await saved).status()).toBe(200)
    await expect.poll(order).toEqual([before[1], before[0], ...before.slice(2)])
    const toast = page.getByTestId('toast').filter({ hasText: 'Assisted top speed moved right, to position 2 of 11.' })
    const undone = page.waitForResponse(r => r.url().endsWith('/targets/order'))
    await toast.getByTestId('toast-action').click()
    expect((await undone).status()).toBe(200)
    await expect.poll(order).toEqual(before)
    await goto(page, `/builds/${w.build.slug}`)
    expect(await order()).toEqual(before)

    // a new target goes to the strip's end, far to the right of a phone's window: it is scrolled to
    await page.getByTestId('add-target').click()
    const form = page.getByTestId('target-form')
    await form.waitFor()
    await form.getByTestId('target-name-input').fill('Brake lever force')
    await form.getByTestId('target-unit').fill('N')
    await expect.poll(() => form.getByTestId('target-unit-quantity').inputValue()).toBe('force')
    await form.getByTestId('target-threshold-input').fill('60')
    await form.getByTestId('target-save').click()
    await form.waitFor({ state: 'detached' })
    const card = page.locator('[data-testid="target-strip"] article').last()
    await expect.poll(() => card.getAttribute('aria-label')).toMatch(/^Brake lever force/)
    await expect.poll(async () => await card.evaluate((el) => {
      const r = el.getBoundingClientRect()
      return r.left >= 0 && r.right <= window.innerWidth
    })).toBe(true)
    await expect(page.getByTestId('toast').filter({ hasText: 'Target Brake lever force added.' }).count()).resolves.toBe(1)
  })

  it('the target and revision pages open with a compact header: the current one marked, the title near the top', async () => {
    const context = await newContext(browser)
    contexts.push(context)
    await signIn(context, w.reviewer)
    const page = await context.newPage()
    for (const size of SIZES) {
      await page.setViewportSize(size)
      await goto(page, `/builds/${w.build.slug}/targets/case_temp`)
      const nav = page.getByTestId('build-compact-nav')
      // every target of the build (the test above may have added one)
      const chips = await nav.locator('a').allInnerTexts()
      expect(TARGETS.filter(t => !chips.some(c => c.includes(t.name)))).toEqual([])
      const current = nav.locator('a[aria-current="page"]')
      expect(await current.count()).toBe(1)
      await expect(current.innerText()).resolves.toContain('Motor case temperature after the climb')
      // marked by a shape and word of its status too, and scrolled into the row's view
      expect(await current.getByTestId('status-word').textContent()).toBe('Short')
      expect(await current.evaluate((a) => {
        const r = a.getBoundingClientRect()
        const row = a.closest('ol')!.getBoundingClientRect()
        return r.left >= row.left - 1 && r.right <= row.right + 1
      })).toBe(true)
      // the whole strip of cards is the build page's, not this one's
      expect(await page.getByTestId('target-strip').count()).toBe(0)
      const title = await page.getByTestId('target-title').boundingBox()
      expect(title!.y).toBeLessThan(260)
      expect(await page.locator('[data-testid="target-header"] a').first().getAttribute('href')).toBe(`/builds/${w.build.slug}`)

      await goto(page, `/builds/${w.build.slug}/revisions/R1`)
      const revs = page.getByTestId('build-compact-nav')
      expect(await revs.locator('a').allInnerTexts()).toEqual(['R1', 'R2'])
      await expect(revs.locator('a[aria-current="page"]').innerText()).resolves.toBe('R1')
      expect((await page.getByTestId('revision-title').boundingBox())!.y).toBeLessThan(260)
    }
  })
})
