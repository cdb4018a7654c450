import type { Browser, Locator, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { mustSucceed } from '../support/api'
import { goto, launchWithWorld, screenshot, signIn, text } from '../support/browser'
import type { SignedUp, World } from '../support/api'
import { BASE_URL } from '../support/env'

// The screens a team lives on, on a phone (390 × 844) and on a desk (1440 × 900): every number
// findable without hovering, nothing clipped, no sideways scroll of the page. Then the forms: a
// refused save says its message once, under the field, with focus on it; a unit of another
// quantity asks before it changes the target; the history chart labels its revisions.
//
// Expected figures worked by hand: mean ± t(0.975, n − 1)·sd/√n, t(0.975, 2) = 4.303 (NIST/SEMATECH
// e-Handbook 1.3.6.7.2).
//   torque  R1 36, 37, 38 → 37.0   R2 37.5, 38.5, 39.5 → 38.5   R3 39, 40, 41 → 40.0   R4 40.5, 41.5, 42.5 → 41.5
//           a straight line through them rises 1.5 N·m a revision and meets 45 N·m at position
//           3 + 3.5/1.5 = 5.33, so three revisions after R4: R7
//   speed   R1 25.9, 26.0, 26.1 → 26.00 ± 0.25   R2 24.45, 24.50, 24.55 → 24.50 ± 0.12 (a drop into the 24–25 band)
//   mass    R1 16.99, 17.00, 17.01 → 17.000   R2 17.19, 17.20, 17.21 → 17.200: Welch p ≈ 1e-5, but 0.2 kg < the 0.5 kg noise band
// The largest real movement is the speed's R1 → R2 (1.5 km/h over √(0.25² + 0.12²) ≈ 0.28), so
// Compare opens on R1 and R2.

const PHONE = { width: 390, height: 844 }
const DESK = { width: 1440, height: 900 }

async function arrange(w: World) {
  const c = w.owner.client
  const b = w.build.slug
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'wheel_torque', name: 'Continuous wheel torque at the hub', unit: 'N·m', comparator: 'atLeast', threshold: 45, stretch: 48 }), 'torque')
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'top_speed', name: 'Assisted top speed', unit: 'km/h', comparator: 'between', threshold: 24, thresholdHigh: 25 }), 'speed')
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'pack_mass', name: 'Pack mass', unit: 'kg', comparator: 'atMost', threshold: 18, noiseBand: 0.5 }), 'mass')
  // built a week apart: 2, 9, 16, 23 and 30 March 2026
  for (const [i, label] of ['R1', 'R2', 'R3', 'R4', 'R5'].entries()) {
    await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, { label, changes: [`change of ${label}`], builtOn: `2026-03-${String(2 + 7 * i).padStart(2, '0')}` }), label)
  }
  const readings = [
    { revision: 'R1', target: 'wheel_torque', values: [36, 37, 38], unit: 'N·m' },
    { revision: 'R2', target: 'wheel_torque', values: [37.5, 38.5, 39.5], unit: 'N·m' },
    { revision: 'R3', target: 'wheel_torque', values: [39, 40, 41], unit: 'N·m' },
    { revision: 'R4', target: 'wheel_torque', values: [40.5, 41.5, 42.5], unit: 'N·m' },
    { revision: 'R1', target: 'top_speed', values: [25.9, 26.0, 26.1], unit: 'km/h' },
    { revision: 'R2', target: 'top_speed', values: [24.45, 24.5, 24.55], unit: 'km/h' },
    { revision: 'R1', target: 'pack_mass', values: [16.99, 17.0, 17.01], unit: 'kg' },
    { revision: 'R2', target: 'pack_mass', values: [17.19, 17.2, 17.21], unit: 'kg' },
  ]
  for (const r of readings) await mustSucceed(c.post(`/api/v1/builds/${b}/readings`, r), `reading ${r.target} ${r.revision}`)
}

async function pageAt(browser: Browser, who: SignedUp, viewport: { width: number, height: number }, colorScheme: 'light' | 'dark' = 'light') {
  // a phone has a touch screen: no hover to fall back on
  const context = await browser.newContext({ baseURL: BASE_URL, viewport, colorScheme, hasTouch: viewport.width < 640 })
  await signIn(context, who)
  return { context, page: await context.newPage() }
}

/**
 * Where an element stands after scrolling it into view: whether its whole box is inside the
 * window and inside every ancestor that clips (overflow other than visible), and its text.
 */
async function shown(locator: Locator) {
  await locator.scrollIntoViewIfNeeded()
  return await locator.evaluate((el) => {
    const box = el.getBoundingClientRect()
    const style = getComputedStyle(el)
    const problems: string[] = []
    if (box.width === 0 || box.height === 0 || style.visibility === 'hidden') problems.push('not drawn')
    if (box.left < -0.5 || box.right > window.innerWidth + 0.5) problems.push(`outside the window: ${Math.round(box.left)}…${Math.round(box.right)} of ${window.innerWidth}`)
    for (let a = el.parentElement; a; a = a.parentElement) {
      const o = getComputedStyle(a)
      if (o.overflowX === 'visible' && o.overflowY === 'visible') continue
      const clip = a.getBoundingClientRect()
      if (box.left < clip.left - 0.5 || box.right > clip.right + 0.5) problems.push(`clipped by ${a.tagName.toLowerCase()}[data-testid=${a.getAttribute('data-testid') ?? ''}]`)
    }
    return { problems, text: (el as HTMLElement).innerText.replace(/\s+/g, ' ').trim() }
  })
}

/** How far the page scrolls sideways (0: it doesn't). */
const sideways = (page: Page) => page.evaluate(() => document.documentElement.scrollWidth - document.documentElement.clientWidth)

describe('phone layouts, refusals and the history chart in Chromium', () => {
  let browser: Browser
  let w: World
  beforeAll(async () => { ({ browser, w } = await launchWithWorld(arrange)) })
  afterAll(async () => { await browser?.close() })

  it('Readings on a phone: the newest revisions in view beside the target names, a cue and buttons for the rest, reasons on tap', async () => {
    const { context, page } = await pageAt(browser, w.engineer, PHONE)
    await goto(page, `/builds/${w.build.slug}`)
    const matrix = page.getByTestId('readings-matrix')
    await matrix.waitFor()
    // the matrix never widens the page: its card ends inside the window
    const card = await matrix.boundingBox()
    expect(card!.x + card!.width).toBeLessThanOrEqual(PHONE.width + 0.5)

    // the target column stays and the newest revision with a reading shows beside it
    expect((await shown(page.locator('[data-testid="matrix-row-wheel_torque"] th'))).problems).toEqual([])
    const r4 = await shown(page.locator('[data-testid="cell-wheel_torque-R4"] [data-testid="cell-mean"]'))
    expect(r4).toEqual({ problems: [], text: '41.5' })
    // a cue says what is in view and offers the older revisions
    const cue = page.getByTestId('matrix-scroll-cue')
    expect((await shown(cue)).text).toMatch(/^← Older R\d(–R\d)? of 5 revisions · swipe sideways Newer →$/)
    expect((await shown(cue)).text).toContain('R5 of 5')
    await screenshot(page, 'phone-readings-newest')
    const older = page.getByTestId('matrix-older')
    for (let i = 0; i < 6 && await older.isEnabled(); i++) {
      await older.click()
      await page.waitForTimeout(400)
    }
    expect(await shown(page.locator('[data-testid="cell-top_speed-R1"] [data-testid="cell-mean"]'))).toEqual({ problems: [], text: '26.00' })
    await expect(text(page, '[data-testid="matrix-scroll-cue"]')).resolves.toMatch(/ R1(–R\d)? of 5 revisions/)

    // a mark explains itself on a tap, in words that fit the target: a drop into the band came closer to it
    const mark = page.locator('[data-testid="cell-top_speed-R2"] [data-testid="movement-mark"]')
    await mark.scrollIntoViewIfNeeded()
    await mark.tap()
    const why = page.locator('[data-testid="cell-top_speed-R2"] [data-testid="movement-why"]')
    await why.waitFor()
    const reason = await shown(why)
    expect(reason.problems).toEqual([])
    expect(reason.text).toMatch(/^Closer to the band \(−1\.5\d* km\/h\): a real change: Welch's test p = /)
    expect(await mark.getAttribute('aria-expanded')).toBe('true')
    // a significant change smaller than the noise band says so, not a bare "Steady"
    const massMark = page.locator('[data-testid="cell-pack_mass-R2"] [data-testid="movement-mark"]')
    expect(await massMark.getAttribute('aria-label')).toMatch(/^Within the noise band \(\+0\.2 kg\): real \(Welch's test p = [\d.e−-]+ < 0\.05\) but smaller than the noise band$/)
    // the legend asks for a tap, not a hover
    const legend = await text(page, '[data-testid="matrix-legend"]')
    expect(legend).not.toMatch(/hover/i)
    expect(legend).toContain('Tap or press a mark to read why')
    await screenshot(page, 'phone-readings-light')
    await context.close()
  })

  it('Compare on a phone: opens on the largest real movement; Change, p and Movement in view for every target', async () => {
    const { context, page } = await pageAt(browser, w.reviewer, PHONE, 'dark')
    await goto(page, `/builds/${w.build.slug}/compare`)
    expect(await page.getByTestId('compare-a').inputValue()).toBe('R1')
    expect(await page.getByTestId('compare-b').inputValue()).toBe('R2')
    await expect(text(page, '[data-testid="compare-opening"]')).resolves.toBe('Opened on the two revisions with the largest real movement; choose any other pair above.')
    expect(await sideways(page)).toBe(0)

    const row = (key: string) => `[data-testid="compare-row-${key}"]`
    const speedDelta = await shown(page.locator(`${row('top_speed')} [data-testid="compare-delta"]`))
    expect(speedDelta).toEqual({ problems: [], text: '−1.50 km/h' })
    const speedMove = await shown(page.locator(`${row('top_speed')} [data-testid="movement-mark"]`))
    expect(speedMove).toEqual({ problems: [], text: '▲ Closer to the band' })
    const massMove = await shown(page.locator(`${row('pack_mass')} [data-testid="movement-mark"]`))
    expect(massMove).toEqual({ problems: [], text: '– Within the noise band' })
    for (const key of ['wheel_torque', 'top_speed', 'pack_mass']) {
      for (const part of ['compare-a-value', 'compare-b-value', 'compare-delta', 'compare-p']) {
        const at = await shown(page.locator(`${row(key)} [data-testid="${part}"]`))
        expect(at.problems, `${key} ${part}`).toEqual([])
        expect(at.text, `${key} ${part}`).not.toBe('')
      }
    }
    // each value is labelled on the phone, where the header row is out of sight
    expect((await shown(page.locator(`${row('wheel_torque')} [data-testid="compare-b-value"]`))).text).toBe('R2 (B) 38.5 ± 2.5 N·m Short')
    await screenshot(page, 'phone-compare-dark')
    await context.close()
  })

  it('Digests on a phone: the "E-mail me" choice and Preview in view; the preview opens in view with focus', async () => {
    const { context, page } = await pageAt(browser, w.engineer, PHONE)
    await goto(page, '/digests')
    const row = `[data-testid="subscription-${w.build.slug}"]`
    await page.locator(row).waitFor()
    expect(await sideways(page)).toBe(0)
    const choice = await shown(page.locator(`${row} [data-testid="frequency"]`))
    expect(choice.problems).toEqual([])
    const preview = page.locator(`${row} [data-testid="preview"]`)
    expect(await shown(preview)).toEqual({ problems: [], text: 'Preview' })
    expect(await preview.getAttribute('aria-label')).toBe('Preview the next digest of Matrix rig')
    await screenshot(page, 'phone-digests-light')
    await preview.click()
    await page.getByTestId('digest-preview').waitFor()
    await page.waitForFunction(() => document.activeElement?.closest('[data-testid="digest-preview"]') != null)
    expect(await sideways(page)).toBe(0)
    await context.close()
  })

  it('Team settings on a phone: every member\'s Role in view and changeable by the Owner', async () => {
    const { context, page } = await pageAt(browser, w.owner, PHONE, 'dark')
    // should the panel not come, say what the page showed and which requests were refused, with
    // their words (so a 401 was traced to a panel's fetch that went without the session)
    const refused: string[] = []
    page.on('response', (res) => {
      if (res.status() >= 400) void res.text().then(body => refused.push(`${res.request().method()} ${res.url()} ${res.status()} ${body.slice(0, 200)}`), () => {})
    })
    await goto(page, `/teams/${w.team.slug}/settings`)
    await page.getByTestId('members-panel').waitFor().catch(async (err: Error) => {
      const cookies = (await context.cookies()).map(c => `${c.name} (${c.value.length} chars)`).join(', ')
      throw new Error(`${err.message}\nthe page at ${page.url()} showed: ${(await page.locator('body').innerText()).slice(0, 400)}\nrefused: ${refused.join('\n') || 'none'}\ncookies: ${cookies}`)
    })
    expect(await sideways(page)).toBe(0)
    for (const who of [w.owner, w.engineer, w.reviewer]) {
      const role = page.locator(`[data-testid="member-${who.email}"] [data-testid="role-select"]`)
      const at = await shown(role)
      expect(at.problems, who.email).toEqual([])
      expect(await role.isEnabled()).toBe(true)
      expect((await shown(page.locator(`[data-testid="member-${who.email}"] td`).first())).problems).toEqual([])
    }
    expect(await page.locator(`[data-testid="member-${w.reviewer.email}"] [data-testid="role-select"]`).inputValue()).toBe('reviewer')
    await screenshot(page, 'phone-team-settings-dark')
    await context.close()

    // an Engineer sees why the roles are fixed, in words rather than a hover title
    const eng = await pageAt(browser, w.engineer, PHONE)
    await goto(eng.page, `/teams/${w.team.slug}/settings`)
    await expect(text(eng.page, '[data-testid="role-note"]')).resolves.toBe('Only an Owner can change roles.')
    await eng.context.close()
  })

  it('the four screens at 1440 px keep their table layout, light and dark', async () => {
    for (const scheme of ['light', 'dark'] as const) {
      const { context, page } = await pageAt(browser, w.owner, DESK, scheme)
      await goto(page, `/builds/${w.build.slug}/compare`)
      // from the sm width up the header row is seen, the labels inside the cells are not
      expect(await page.locator('[data-testid="compare-targets"] thead').isVisible()).toBe(true)
      const head = await page.locator('[data-testid="compare-targets"] thead').boundingBox()
      expect(head!.height).toBeGreaterThan(10)
      expect(await sideways(page)).toBe(0)
      await screenshot(page, `desk-compare-${scheme}`)
      await goto(page, '/digests')
      expect(await sideways(page)).toBe(0)
      await screenshot(page, `desk-digests-${scheme}`)
      await goto(page, `/teams/${w.team.slug}/settings`)
      expect(await sideways(page)).toBe(0)
      await screenshot(page, `desk-team-settings-${scheme}`)
      await goto(page, `/builds/${w.build.slug}`)
      // wide enough for every revision: no cue
      await page.getByTestId('readings-matrix').waitFor()
      expect(await page.getByTestId('matrix-scroll-cue').count()).toBe(0)
      await screenshot(page, `desk-readings-${scheme}`)
      await context.close()
    }
  })

  it('the history chart labels each revision under its point and says where the forecast crosses', async () => {
    for (const viewport of [DESK, PHONE]) {
      const { context, page } = await pageAt(browser, w.engineer, viewport)
      await goto(page, `/builds/${w.build.slug}/targets/wheel_torque`)
      const chart = page.getByTestId('history-chart')
      await page.waitForFunction(() => (document.querySelector('[data-testid="history-chart"]')?.getAttribute('data-x-ticks') ?? '') !== '')
      // let a redraw under way (the dates follow the chart's width) finish
      await page.evaluate(() => new Promise(resolve => requestAnimationFrame(() => requestAnimationFrame(resolve))))
      const ticks = (await chart.getAttribute('data-x-ticks'))!.split('|')
      // R1 … R5 with the day each was built, then the revisions the forecast line reaches (R6, R7,
      // no date yet); on a phone no dates, and chart.js may skip labels for room but never mislabels one
      if (viewport === DESK) expect(ticks).toEqual(['R1 2 Mar', 'R2 9 Mar', 'R3 16 Mar', 'R4 23 Mar', 'R5 30 Mar', 'R6', 'R7'])
      else {
        expect(ticks.length).toBeGreaterThanOrEqual(4)
        expect(ticks.every(t => /^R[1-7]$/.test(t))).toBe(true)
        expect(ticks[0]).toBe('R1')
      }
      await expect(text(page, '[data-testid="chart-crossing"]')).resolves.toBe('crosses 45 N·m at ≈R7')
      await expect(text(page, '[data-testid="chart-forecast-note"]')).resolves.toContain('the line crosses 45 N·m at ≈R7')
      await screenshot(page, `history-chart-labels-${viewport.width}`)
      await context.close()
    }
  })

  it('a refused save says its message once, under the field, in plain words, and puts focus there', async () => {
    const { context, page } = await pageAt(browser, w.engineer, DESK)
    await goto(page, `/builds/${w.build.slug}`)
    await page.getByTestId('new-revision').click()
    const form = page.getByTestId('revision-form')
    await form.waitFor()
    const label = form.getByTestId('revision-label')
    await label.fill('R2')
    await page.getByTestId('revision-save').click()
    await page.waitForFunction(() => document.activeElement?.getAttribute('data-testid') === 'revision-label')
    expect(await label.getAttribute('aria-invalid')).toBe('true')
    await expect(text(page, '[data-testid="revision-form"] .error-text')).resolves.toBe('A revision labelled "R2" exists in this build; choose another')
    // said once: no banner repeating it, and no field path in front
    expect(await form.getByTestId('form-error').count()).toBe(0)
    expect(await form.innerText()).not.toMatch(/label: /)
    await screenshot(page, 'refusal-under-field')
    await page.keyboard.press('Escape')
    await context.close()
  })

  it('a unit of another quantity asks before the target changes quantity; a far-off threshold is warned about', async () => {
    const { context, page } = await pageAt(browser, w.engineer, DESK)
    await goto(page, `/builds/${w.build.slug}`)
    await page.getByTestId('add-target').click()
    const form = page.getByTestId('target-form')
    await form.waitFor()
    await form.getByTestId('target-name-input').fill('Descent speed')
    const quantity = form.getByTestId('target-unit-quantity')
    await quantity.selectOption('velocity')
    const unit = form.getByTestId('target-unit')
    await unit.fill('km/h')
    await page.waitForFunction(() => document.querySelector('[data-testid="target-form"] [data-testid="unit-hint"]')?.textContent?.includes('velocity'))
    // a mass unit: a question inside the form, the quantity unchanged until it is answered
    await unit.fill('kg')
    const question = form.getByTestId('target-unit-quantity-question')
    await question.waitFor()
    await expect(question.innerText()).resolves.toMatch(/“kg” measures mass, not velocity\.\s+Make this a target of mass\?/)
    expect(await quantity.inputValue()).toBe('velocity')
    // saving now is held back, with focus on the unit
    await form.getByTestId('target-threshold-input').fill('1e23')
    await expect(text(page, '[data-testid="target-threshold-warning"]')).resolves.toBe('1e+23 kg is unusually large for this unit: check the value and the unit. It can still be saved.')
    await form.getByTestId('target-save').click()
    await page.waitForFunction(() => document.activeElement?.getAttribute('data-testid') === 'target-unit')
    await expect(form.locator('.error-text').first().innerText()).resolves.toBe('Answer the question about the quantity first')
    // keyboard: Tab reaches the answers; "No" keeps velocity and empties the unit
    const keep = form.getByTestId('target-unit-quantity-keep')
    await keep.focus()
    await page.keyboard.press('Enter')
    await expect.poll(() => unit.inputValue()).toBe('')
    expect(await quantity.inputValue()).toBe('velocity')
    expect(await question.count()).toBe(0)
    // asked again, "Yes" switches the quantity
    await unit.fill('kg')
    await question.waitFor()
    await form.getByTestId('target-unit-quantity-switch').click()
    await expect.poll(() => quantity.inputValue()).toBe('mass')
    expect(await question.count()).toBe(0)
    // the warning never refuses: a 1e23 kg threshold saves once the person means it
    const created = page.waitForResponse(r => r.url().endsWith(`/api/v1/builds/${w.build.slug}/targets`) && r.request().method() === 'POST')
    await form.getByTestId('target-save').click()
    const res = await created
    expect(res.status()).toBe(201)
    expect(await res.json()).toMatchObject({ unit: 'kg', quantity: 'mass', threshold: 1e23 })
    await context.close()
  })
})
