import { mkdirSync } from 'node:fs'
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core'
import { BASE_URL, ROOT } from './env'

export const ARTIFACTS = `${ROOT}tests/artifacts`

/** Debian's Chromium, headless, with no traffic of its own to the outside. */
export async function launchBrowser(): Promise<Browser> {
  return await chromium.launch({
    executablePath: process.env.CHROMIUM_PATH ?? '/usr/bin/chromium',
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run',
      '--disable-background-networking', '--disable-component-update', '--disable-sync'],
  })
}

export async function newContext(browser: Browser, opts: { colorScheme?: 'light' | 'dark' } = {}): Promise<BrowserContext> {
  return await browser.newContext({ baseURL: BASE_URL, viewport: { width: 1280, height: 860 }, colorScheme: opts.colorScheme ?? 'light' })
}

/** Waits until Nuxt has hydrated the page, so clicks reach Vue's handlers. */
export async function waitForHydration(page: Page) {
  await page.waitForFunction(() => {
    const el = document.querySelector('#__nuxt') as (HTMLElement & { __vue_app__?: unknown }) | null
    return Boolean(el && el.__vue_app__) && !(window as unknown as { useNuxtApp?: () => { isHydrating: boolean } }).useNuxtApp?.().isHydrating
  })
}

export async function goto(page: Page, path: string) {
  await page.goto(path, { waitUntil: 'networkidle' })
  await waitForHydration(page)
}

export async function screenshot(page: Page, name: string) {
  mkdirSync(ARTIFACTS, { recursive: true })
  await page.screenshot({ path: `${ARTIFACTS}/${name}.png`, fullPage: true })
}
