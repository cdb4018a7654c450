import type { Browser, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { mustSucceed, type World } from '../support/api'
import { goto, launchWithWorld, screenshot, signedInPage, text, watchPage } from '../support/browser'

// A target's model from a template, picked by keyboard in the target form, and the cautions with
// numbers its page then shows. Worked by hand (OpenStax University Physics Vol. 1, eq. 10.4 and
// eq. 7.6; 1 rpm = 2π/60 rad/s, NIST SP 811 B.8):
//   rim speed 3600 rpm × 60 mm = 120π rad/s × 0.06 m = 22.6195 m/s = 81.4 km/h
//   a 58 g ball at that speed (the model's prediction, above the 20 m/s threshold and the
//   18.1 m/s measured): ½ · 0.058 · 22.6195² = 14.84 J

async function arrange(w: World) {
  const c = w.owner.client
  const b = w.build.slug
  await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, {
    label: 'R1',
    summary: 'Machined wheels at 3600 rpm',
    parameters: [
      { key: 'motor_speed', name: 'Motor speed set-point', value: 3600, unit: 'rpm' },
      { key: 'wheel_radius', name: 'Wheel radius', value: 60, unit: 'mm', tolerance: 0.2 },
      { key: 'ball_mass', name: 'Ball mass', value: 58, unit: 'g', tolerance: 1 },
      { key: 'wheel_material', name: 'Wheel material', value: 'rubber tread' },
    ],
  }), 'R1')
}

async function openTemplates(page: Page) {
  await page.getByTestId('add-target').click()
  const form = page.getByTestId('target-form')
  await form.waitFor()
  await form.getByTestId('target-name-input').fill('Ball exit speed')
  await form.getByTestId('target-unit').fill('m/s')
  await expect.poll(() => form.getByTestId('target-unit-quantity').inputValue()).toBe('velocity')
  await form.getByTestId('target-threshold-input').fill('20')
  await form.getByTestId('use-template').click()
  await form.getByTestId('template-panel').waitFor()
  await form.getByTestId('template-option-rim-speed').waitFor()
  return form
}

describe('design templates in the target form, and the cautions with numbers, in Chromium', () => {
  let browser: Browser
  let w: World
  beforeAll(async () => { ({ browser, w } = await launchWithWorld(arrange)) })
  afterAll(async () => { await browser?.close() })

  it('picks a template by keyboard, fills its slots from the latest revision, saves the model and shows the ball’s energy', async () => {
    const { context, page } = await signedInPage(browser, w.engineer)
    await page.setViewportSize({ width: 1440, height: 900 })
    const { hosts, problems } = watchPage(page)
    await goto(page, `/builds/${w.build.slug}`)
    const form = await openTemplates(page)
    const toggle = form.getByTestId('use-template')
    await expect(toggle.getAttribute('aria-expanded')).resolves.toBe('true')

    // six templates, each with its source named
    const group = form.getByRole('group', { name: 'Template' })
    expect(await group.getByRole('radio').count()).toBe(6)
    const listed = await form.getByTestId('template-panel').innerText()
    expect(listed).toContain('Source: OpenStax University Physics Vol. 1, eq. 10.4')
    expect(listed).toContain('Source: OpenStax University Physics Vol. 1, eq. 7.6')
    expect(listed).toMatch(/DC motor no-load speed[\s\S]*Source: common practice, no source/)

    // the first template has the focus when the picker opens: Space picks it, arrows move on
    await expect(page.evaluate(() => (document.activeElement as HTMLInputElement | null)?.value)).resolves.toBe('rim-speed')
    await page.keyboard.press('Space')
    await expect(form.getByTestId('template-option-rim-speed').isChecked()).resolves.toBe(true)
    // each slot guessed from its quantity; text parameters are not offered
    await expect(form.getByTestId('template-slot-omega').inputValue()).resolves.toBe('motor_speed')
    await expect(form.getByTestId('template-slot-r').inputValue()).resolves.toBe('wheel_radius')
    const offered = await form.getByTestId('template-slot-r').locator('option').allInnerTexts()
    expect(offered[1]).toBe('wheel_radius = 60 mm · Wheel radius')
    expect(offered.join('|')).not.toContain('wheel_material')
    await expect(text(page, '[data-testid="template-preview"]')).resolves.toBe('motor_speed * wheel_radius')
    expect(await form.getByTestId('template-problems').count()).toBe(0)

    // kinetic energy needs a speed parameter the revision doesn't have: the problem is shown
    await page.keyboard.press('ArrowDown')
    await expect(form.getByTestId('template-option-kinetic-energy').isChecked()).resolves.toBe(true)
    await expect(form.getByTestId('template-slot-m').inputValue()).resolves.toBe('ball_mass')
    await expect(text(page, '[data-testid="template-problems"]')).resolves.toBe('Fill speed')
    await expect(form.getByTestId('template-apply').isDisabled()).resolves.toBe(true)
    // filled with a length instead, it gives a moment of inertia, not this target's velocity
    await form.getByTestId('template-slot-v').selectOption('wheel_radius')
    await expect(text(page, '[data-testid="template-problems"]')).resolves.toBe('The model gives moment of inertia (kg·m²) but this target is measured in velocity (m/s)')

    await form.getByTestId('template-option-kinetic-energy').focus()
    await page.keyboard.press('ArrowUp')
    await expect(form.getByTestId('template-option-rim-speed').isChecked()).resolves.toBe(true)
    await expect(text(page, '[data-testid="template-preview"]')).resolves.toBe('motor_speed * wheel_radius')
    await screenshot(page, 'design-template-picker-light')
    await form.getByTestId('template-apply').click()
    await form.getByTestId('template-panel').waitFor({ state: 'detached' })
    await expect(form.getByTestId('target-model-input').inputValue()).resolves.toBe('motor_speed * wheel_radius')
    await expect(page.evaluate(() => document.activeElement?.getAttribute('data-testid'))).resolves.toBe('target-model-input')

    const created = page.waitForResponse(r => r.url().endsWith(`/api/v1/builds/${w.build.slug}/targets`) && r.request().method() === 'POST')
    await form.getByTestId('target-save').click()
    const res = await created
    expect(res.status()).toBe(201)
    const target = await res.json()
    expect(target).toMatchObject({ key: 'ball_exit_speed', unit: 'm/s', model: 'motor_speed * wheel_radius' })

    await mustSucceed(w.engineer.client.post(`/api/v1/builds/${w.build.slug}/readings`, {
      revision: 'R1', target: 'ball_exit_speed', values: [18.0, 18.3, 17.9, 18.2, 18.1, 17.8, 18.4, 18.1], unit: 'm/s',
    }), 'reading')
    await goto(page, `/builds/${w.build.slug}/targets/ball_exit_speed`)
    const cautions = page.getByTestId('design-cautions')
    await cautions.waitFor()
    const shown = (await cautions.innerText()).replace(/\s+/g, ' ')
    expect(shown).toContain('A 58 g projectile at 22.6 m/s carries 14.8 J.')
    expect(shown).toContain('Wear eye protection')
    expect(shown).toContain('The rim moves at 22.6 m/s (81.4 km/h).')
    expect(shown).toContain('local codes and licensed practice')
    expect(shown).toContain('From ball_mass = 58 g and 22.62 m/s (the model’s prediction on R1)')
    const energy = Number(await cautions.locator('[data-caution-unit="J"]').getAttribute('data-caution-value'))
    expect(energy).toBeCloseTo(0.5 * 0.058 * (3600 * Math.PI / 30 * 0.06) ** 2, 9)
    await screenshot(page, 'design-caution-light')

    expect(problems).toEqual([])
    expect([...hosts]).toEqual(['127.0.0.1'])
    await context.close()
  })

  it('fits a phone in the dark: the picker and the cautions stay inside the screen', async () => {
    const { context, page } = await signedInPage(browser, w.engineer, { colorScheme: 'dark' })
    await page.setViewportSize({ width: 390, height: 844 })
    await goto(page, `/builds/${w.build.slug}/targets/ball_exit_speed`)
    await page.getByTestId('design-cautions').waitFor()
    await screenshot(page, 'design-caution-phone-dark')
    // the cautions wrap inside the screen (the page's wide tables scroll in their own boxes)
    const cautionBox = await page.getByTestId('design-cautions').boundingBox()
    expect(cautionBox!.x).toBeGreaterThanOrEqual(0)
    expect(cautionBox!.x + cautionBox!.width).toBeLessThanOrEqual(390)

    await goto(page, `/builds/${w.build.slug}`)
    const form = await openTemplates(page)
    await form.getByTestId('template-option-rim-speed').check()
    await expect(text(page, '[data-testid="template-preview"]')).resolves.toBe('motor_speed * wheel_radius')
    const box = await form.getByTestId('template-panel').boundingBox()
    expect(box!.x).toBeGreaterThanOrEqual(0)
    expect(box!.x + box!.width).toBeLessThanOrEqual(390)
    await form.getByTestId('template-fill').scrollIntoViewIfNeeded()
    await screenshot(page, 'design-template-picker-phone-dark')
    await context.close()
  })
})
