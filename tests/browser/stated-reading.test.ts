import type { Browser } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { mustSucceed, type World } from '../support/api'
import { goto, launchWithWorld, screenshot, signedInPage, text, watchPage } from '../support/browser'

// A stated result entered through the reading form. Expected strings worked out by hand:
//   42.5 N·m ± u = 0.4 N·m with ν = 6: t(0.975, 6) = 2.447 (NIST/SEMATECH e-Handbook 1.3.6.7.2),
//   half-width 2.447 × 0.4 = 0.9788 → "42.50 ± 0.98 N·m", wholly above 40: Met; k printed as 2.45.

async function arrange(w: World) {
  const c = w.owner.client
  const b = w.build.slug
  await mustSucceed(c.post(`/api/v1/builds/${b}/targets`, { key: 'wheel_torque', name: 'Continuous wheel torque', unit: 'N·m', comparator: 'atLeast', threshold: 40 }), 'target')
  await mustSucceed(c.post(`/api/v1/builds/${b}/revisions`, { label: 'R1', summary: 'Bench hub, certificate from the torque lab' }), 'R1')
}

describe('a stated result through the reading form, in Chromium', () => {
  let browser: Browser
  let w: World
  beforeAll(async () => { ({ browser, w } = await launchWithWorld(arrange)) })
  afterAll(async () => { await browser?.close() })

  it('switches to “Stated result” by keyboard, checks u, and lists the reading as value ± u', async () => {
    const { context, page } = await signedInPage(browser, w.engineer)
    const { hosts, problems } = watchPage(page)
    await goto(page, `/builds/${w.build.slug}`)

    await page.getByTestId('add-reading').click()
    const dialog = page.getByTestId('reading-dialog')
    await dialog.waitFor()
    // the two kinds are one labelled radio group; arrow keys move between them
    const group = dialog.getByRole('radiogroup', { name: 'Kind of reading' })
    expect(await group.getByRole('radio').count()).toBe(2)
    expect(await dialog.getByTestId('reading-kind-samples').isChecked()).toBe(true)
    expect(await dialog.getByTestId('reading-stated').count()).toBe(0)
    await dialog.getByTestId('reading-kind-samples').focus()
    await page.keyboard.press('ArrowRight')
    expect(await dialog.getByTestId('reading-kind-stated').isChecked()).toBe(true)
    await dialog.getByTestId('reading-stated').waitFor()
    expect(await dialog.getByTestId('reading-samples').count()).toBe(0)
    expect(await dialog.getByTestId('reading-resolution').count()).toBe(0)

    await dialog.getByTestId('reading-target').selectOption('wheel_torque')
    await dialog.getByTestId('reading-value').fill('42.5')
    await dialog.getByTestId('reading-u').fill('-0.4')
    await dialog.getByTestId('reading-dof').fill('6')
    await dialog.getByTestId('reading-method').fill('Torque lab certificate 12')
    await dialog.getByTestId('reading-save').click()
    await expect(dialog.getByTestId('reading-stated').innerText()).resolves.toContain('The standard uncertainty u is 0 or more')
    await dialog.getByTestId('reading-u').fill('0.4')
    await dialog.getByTestId('reading-dof').fill('six')
    await expect(dialog.getByTestId('reading-stated').innerText()).resolves.toContain('leave it blank for infinite')
    await dialog.getByTestId('reading-dof').fill('6')
    await screenshot(page, 'stated-reading-form')
    await dialog.getByTestId('reading-save').click()
    await dialog.waitFor({ state: 'detached' })

    const torque = '[data-testid="target-card-wheel_torque"]'
    await page.waitForFunction(() => document.querySelector('[data-testid="target-card-wheel_torque"] [data-testid="target-mean"]')?.textContent?.includes('42.50'))
    await expect(text(page, `${torque} [data-testid="target-mean"]`)).resolves.toBe('42.50 ± 0.98 N·m')
    await expect(text(page, `${torque} [data-testid="status-word"]`)).resolves.toBe('Met')

    await goto(page, `/builds/${w.build.slug}/targets/wheel_torque`)
    await expect(text(page, '[data-testid="readings-table"] [data-testid="reading-stated-text"]')).resolves.toBe('stated: 42.5 ± 0.4 N·m (k = 2.45, ν = 6)')
    await goto(page, `/builds/${w.build.slug}/revisions/R1`)
    await expect(text(page, '[data-testid="revision-reading-stated"]')).resolves.toBe('stated: 42.5 ± 0.4 N·m (k = 2.45, ν = 6)')

    expect([...hosts]).toEqual(['127.0.0.1'])
    expect(problems).toEqual([])
    await context.close()
  })
})
