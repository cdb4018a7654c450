import type { Browser, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, TEST_PASSWORD, uniqueEmail } from '../support/api'
import { goto, launchBrowser, newContext, screenshot, waitForHydration } from '../support/browser'
import { linkIn, waitForMail } from '../support/maildev'

async function fill(page: Page, testid: string, value: string) {
  await page.getByTestId(testid).fill(value)
}

describe('accounts in Chromium', () => {
  let browser: Browser
  beforeAll(async () => { browser = await launchBrowser() })
  afterAll(async () => {
    await browser?.close()
    await closeTestDb()
  })

  it('sign up, create a team, invite, accept in a second browser, change the role, sign out', async () => {
    const ownerEmail = uniqueEmail('owner')
    const memberEmail = uniqueEmail('member')
    const a = await (await newContext(browser)).newPage()

    await goto(a, '/signup')
    // validation as you type, with the shared schema
    await fill(a, 'field-password', 'short')
    await a.getByTestId('field-password').blur()
    await expect(a.getByText('Use at least 10 characters').isVisible()).resolves.toBe(true)
    await fill(a, 'field-name', 'Wren Owner')
    await fill(a, 'field-email', ownerEmail)
    await fill(a, 'field-password', TEST_PASSWORD)
    await a.getByTestId('signup-submit').click()
    await a.waitForURL('**/teams')
    await a.getByTestId('signed-in-as').waitFor()
    expect(await a.getByTestId('signed-in-as').textContent()).toContain('Wren Owner')

    await a.getByTestId('new-team').click()
    await fill(a, 'field-team-name', 'Kiln Crew')
    await a.getByTestId('create-team').click()
    await a.waitForURL(/\/teams\/kiln-crew[^/]*\/settings/)
    await waitForHydration(a)
    const settingsUrl = a.url()

    await fill(a, 'field-invite-email', memberEmail)
    await a.getByTestId('invite-role').selectOption('engineer')
    await a.getByTestId('invite-submit').click()
    await a.getByTestId('invite-notice').waitFor()
    await screenshot(a, 'team-settings')

    const link = linkIn(await waitForMail(memberEmail, /invited you/), '/invitations/')
    const b = await (await newContext(browser)).newPage()
    await goto(b, new URL(link).pathname)
    await b.getByTestId('invitation-sign-up').click()
    await b.waitForURL(/\/signup/)
    await waitForHydration(b)
    expect(await b.getByTestId('field-email').inputValue()).toBe(memberEmail)
    await fill(b, 'field-name', 'Milo Member')
    await fill(b, 'field-password', TEST_PASSWORD)
    await b.getByTestId('signup-submit').click()
    await b.waitForURL('**/teams')
    await b.getByText('Kiln Crew').waitFor()

    await goto(a, settingsUrl)
    const row = a.getByTestId(`member-${memberEmail}`)
    await row.waitFor()
    expect(await row.getByTestId('role-select').inputValue()).toBe('engineer')
    await row.getByTestId('role-select').selectOption('reviewer')
    await a.getByTestId('members-message').waitFor()
    expect(await a.getByTestId('members-message').textContent()).toContain('Reviewer')
    await goto(a, settingsUrl)
    expect(await a.getByTestId(`member-${memberEmail}`).getByTestId('role-select').inputValue()).toBe('reviewer')

    // the new Reviewer sees the members but can't change roles, and sees why
    await goto(b, new URL(settingsUrl).pathname)
    const select = b.getByTestId(`member-${ownerEmail}`).getByTestId('role-select')
    expect(await select.isDisabled()).toBe(true)
    expect(await select.getAttribute('title')).toContain('Only an Owner')

    await a.getByTestId('sign-out').click()
    await a.waitForURL(u => new URL(u).pathname === '/')
    await goto(a, '/teams')
    expect(new URL(a.url()).pathname).toBe('/login')
  })
})
