import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { mustSucceed, type World } from '../support/api'
import { goto, launchWithWorld, screenshot, signedInPage } from '../support/browser'
import { uploadOk } from '../support/files'

// The CSV import's target picker offers only measured targets: a derived one is computed from its
// inputs, and the server refuses readings of it. Here the derived target comes first in the strip.

async function arrange(w: World) {
  const c = w.owner.client
  const b = w.build.slug
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'wheel_torque', name: 'Continuous wheel torque', unit: 'N·m', comparator: 'atLeast', threshold: 40 }), 'torque')
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'wheel_speed', name: 'Wheel speed', unit: 'rpm', comparator: 'atLeast', threshold: 50 }), 'wheel speed')
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'wheel_power', name: 'Power at the wheel', unit: 'W', comparator: 'atLeast', threshold: 200, formula: 'wheel_torque * wheel_speed' }), 'power')
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets/order`, { keys: ['wheel_power', 'wheel_torque', 'wheel_speed'] }), 'order')
  await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, { label: 'R1' }), 'R1')
  await uploadOk(c, b, 'torque.csv', 'sample,torque\n1,41.2\n2,41.9\n3,40.8\n')
}

describe('the CSV import in Chromium', () => {
  let browser: Browser
  let w: World
  beforeAll(async () => { ({ browser, w } = await launchWithWorld(arrange)) })
  afterAll(async () => { await browser?.close() })

  it('leaves derived targets out of its target picker, takes a typed unit, and imports into the first measured one', async () => {
    const { context, page } = await signedInPage(browser, w.engineer)
    await goto(page, `/builds/${w.build.slug}?tab=files`)
    // the strip has the derived target first
    expect(await page.locator('[data-testid="target-strip"] [data-testid^="target-card-"]').evaluateAll(els => els.map(el => el.getAttribute('data-testid')))).toEqual([
      'target-card-wheel_power', 'target-card-wheel_torque', 'target-card-wheel_speed',
    ])

    await page.locator('[data-testid="file-list"] li', { hasText: 'torque.csv' }).getByTestId('file-import').click()
    const wizard = page.getByTestId('csv-wizard')
    await wizard.getByTestId('csv-preview').waitFor()
    const picker = wizard.getByTestId('csv-target')
    expect(await picker.locator('option').evaluateAll(els => els.map(el => (el as HTMLOptionElement).value))).toEqual(['wheel_torque', 'wheel_speed'])
    expect(await picker.inputValue()).toBe('wheel_torque')

    // the unit field takes any typed spelling, and says so when it is of another quantity
    const unit = wizard.getByTestId('csv-unit')
    expect(await unit.inputValue()).toBe('N·m')
    await unit.fill('rpm')
    await expect.poll(() => wizard.getByTestId('unit-hint').innerText()).toMatch(/torque \(N·m\)/)
    await unit.fill('N m')
    // the spaced form is read as the target's own unit: the hint names torque, no complaint
    await expect.poll(() => wizard.getByTestId('unit-hint').innerText()).not.toMatch(/measured in/)
    expect(await wizard.getByTestId('unit-hint').innerText()).toMatch(/torque/)
    await screenshot(page, 'csv-import-columns')
    await wizard.getByTestId('csv-revision').selectOption('R1')
    await wizard.getByTestId('csv-commit').click()
    await wizard.getByTestId('csv-result').waitFor()
    await expect(wizard.getByTestId('csv-result').innerText()).resolves.toContain('of Continuous wheel torque')
    await context.close()
  })
})
