import { mkdirSync, readFileSync } from 'node:fs'
import { createRequire } from 'node:module'
import { chromium, type Browser, type BrowserContext, type Page } from 'playwright-core'
import { expect } from 'vitest'
import { makeWorld, type SignedUp, type World } from './api'
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

/** Chromium and a fresh world (see `makeWorld`) with the data a test file arranges in it. */
export async function launchWithWorld(arrange: (w: World) => Promise<void>): Promise<{ browser: Browser, w: World }> {
  const browser = await launchBrowser()
  const w = await makeWorld()
  await arrange(w)
  return { browser, w }
}

/** Signs the context in as `who` through the API, so its pages carry the session cookie. */
export async function signIn(context: BrowserContext, who: SignedUp) {
  const res = await context.request.post('/api/auth/login', { data: { email: who.email, password: who.password } })
  expect(res.status()).toBe(200)
}

/** A page signed in as `who`, in a context of its own. */
export async function signedInPage(browser: Browser, who: SignedUp, opts: { colorScheme?: 'light' | 'dark' } = {}): Promise<{ context: BrowserContext, page: Page }> {
  const context = await newContext(browser, opts)
  await signIn(context, who)
  return { context, page: await context.newPage() }
}

/** What a page does besides rendering: the hosts it asks, and the errors and warnings it logs. */
export function watchPage(page: Page): { hosts: Set<string>, problems: string[] } {
  const hosts = new Set<string>()
  const problems: string[] = []
  page.on('request', req => hosts.add(new URL(req.url()).hostname))
  page.on('console', (m) => { if (m.type() === 'error' || m.type() === 'warning') problems.push(m.text()) })
  page.on('pageerror', e => problems.push(e.message))
  return { hosts, problems }
}

/** The first match's text, with its white space collapsed. */
export const text = async (page: Page, selector: string) => ((await page.locator(selector).first().innerText()).replace(/\s+/g, ' ').trim())

let axeSource: string | null = null

/**
 * The accessibility rules axe-core finds broken in the page (or in the part `include` selects), as
 * "rule (impact): the elements" lines, so a failing check says what to fix. `only` keeps to the
 * rules of some axe tags (e.g. wcag2aa) or to some rules by name.
 */
export async function axeViolations(page: Page, include?: string, only?: { type: 'tag' | 'rule', values: string[] }): Promise<string[]> {
  axeSource ??= readFileSync(createRequire(import.meta.url).resolve('axe-core/axe.min.js'), 'utf8')
  // evaluated through the debugging protocol, which the page's Content Security Policy doesn't govern
  await page.evaluate(axeSource)
  return await page.evaluate(async ({ include, only }) => {
    const axe = (window as unknown as { axe: { run: (context: unknown, options: unknown) => Promise<{ violations: { id: string, impact: string, nodes: { target: string[] }[] }[] }> } }).axe
    const options = only ? { resultTypes: ['violations'], runOnly: only } : { resultTypes: ['violations'] }
    const result = await axe.run(include ? { include: [include] } : document, options)
    return result.violations.map(v => `${v.id} (${v.impact}): ${v.nodes.map(n => n.target.join(' ')).join(', ')}`)
  }, { include, only })
}
