import type { Browser, Page } from 'playwright-core'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { closeTestDb, makeWorld, testDb, type World } from '../support/api'
import { goto, launchBrowser, newContext, screenshot, signIn } from '../support/browser'
import { byteSource, PNG_1x1 } from '../support/files'
import { newRevision, newTarget } from '../support/measure'

/** Records every value the upload progress bars take, and what a sending upload says, from the page itself. */
async function recordProgress(page: Page) {
  await page.evaluate(() => {
    const w = window as unknown as { progressSeen: number[], sendingWords: string[] }
    w.progressSeen = []
    w.sendingWords = []
    new MutationObserver(() => {
      for (const bar of document.querySelectorAll('[data-testid="upload-progress"]')) w.progressSeen.push(Number(bar.getAttribute('aria-valuenow')))
      for (const state of document.querySelectorAll('[data-testid="upload-sending"] [data-testid="upload-state"]')) w.sendingWords.push(state.textContent!.trim())
    }).observe(document.body, { subtree: true, childList: true, characterData: true, attributes: true, attributeFilter: ['aria-valuenow'] })
  })
  return async () => await page.evaluate(() => (window as unknown as { progressSeen: number[] }).progressSeen)
}

const sendingWords = async (page: Page) => await page.evaluate(() => (window as unknown as { sendingWords: string[] }).sendingWords)

describe('files in Chromium', () => {
  let browser: Browser
  let w: World
  beforeAll(async () => {
    browser = await launchBrowser()
    w = await makeWorld()
    await newTarget(w.owner.client, w.build.slug, { key: 'wheel_torque', name: 'Continuous wheel torque', unit: 'N·m', comparator: 'atLeast', threshold: 40 })
    await newRevision(w.owner.client, w.build.slug, 'R1')
  })
  afterAll(async () => {
    await browser?.close()
    await closeTestDb()
  })

  it('uploads through the Files tab with a progress bar, lists the file, and cancels another', async () => {
    const context = await newContext(browser)
    await signIn(context, w.engineer)
    const page = await context.newPage()
    const hosts = new Set<string>()
    page.on('request', req => hosts.add(new URL(req.url()).hostname))
    // a slow uplink, so the bar has something to show
    const cdp = await context.newCDPSession(page)
    await cdp.send('Network.enable')
    await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 5, downloadThroughput: -1, uploadThroughput: 4 * 1024 * 1024 })

    await goto(page, `/builds/${w.build.slug}?tab=files`)
    await page.getByTestId('files-panel').waitFor()
    await expect(page.getByTestId('no-files').innerText()).resolves.toContain('No files yet')
    const progress = await recordProgress(page)

    const footage = byteSource('browser footage')(6 * 1024 * 1024)
    await page.getByTestId('file-input').setInputFiles({ name: 'dyno run R1.mp4', mimeType: 'video/mp4', buffer: footage })
    await page.getByTestId('upload-sending').waitFor()
    await page.getByTestId('upload-done').waitFor({ timeout: 60_000 })
    const seen = await progress()
    // the bar moved through values between empty and full while the bytes went up
    expect(seen.some(v => v > 0 && v < 100), JSON.stringify(seen)).toBe(true)
    expect(seen).toEqual([...seen].sort((a, b) => a - b))
    // "Uploading 27 %": the word, a space, the percentage
    const words = await sendingWords(page)
    expect(words.length).toBeGreaterThan(0)
    for (const said of words) expect(said).toMatch(/^Uploading \d{1,3} %$/)

    const card = page.locator('[data-testid="file-list"] li', { hasText: 'dyno run R1.mp4' })
    await card.waitFor()
    await expect(card.getByTestId('file-name').innerText()).resolves.toBe('dyno run R1.mp4')
    const row = await testDb()('files').where({ build_id: w.build.id, name: 'dyno run R1.mp4' }).first()
    expect(Number(row.size)).toBe(footage.length)
    expect(row.uploaded_by).toBe(w.engineer.user.id)

    // a second upload, cancelled half-way: nothing listed, nothing kept
    await page.getByTestId('file-input').setInputFiles({ name: 'aborted.bin', mimeType: 'application/octet-stream', buffer: byteSource('abort')(24 * 1024 * 1024) })
    await page.getByTestId('upload-sending').waitFor()
    await page.getByTestId('upload-cancel').click()
    await page.getByTestId('upload-cancelled').waitFor()
    await page.waitForTimeout(500)
    expect(await testDb()('files').where({ build_id: w.build.id, name: 'aborted.bin' }).first()).toBeUndefined()
    expect(await page.locator('[data-testid="file-list"] li', { hasText: 'aborted.bin' }).count()).toBe(0)

    // several files at once, dropped anywhere on the page
    await cdp.send('Network.emulateNetworkConditions', { offline: false, latency: 0, downloadThroughput: -1, uploadThroughput: -1 })
    await page.evaluate((png) => {
      const dt = new DataTransfer()
      dt.items.add(new File([new Uint8Array(png)], 'torque arm.png', { type: 'image/png' }))
      dt.items.add(new File(['sample,torque\n1,41.2\n2,41.9\n3,40.8\n'], 'torque.csv', { type: 'text/csv' }))
      for (const type of ['dragenter', 'dragover', 'drop']) document.body.dispatchEvent(new DragEvent(type, { dataTransfer: dt, bubbles: true, cancelable: true }))
    }, [...PNG_1x1])
    await page.locator('[data-testid="file-list"] li', { hasText: 'torque.csv' }).waitFor()
    const image = page.locator('[data-testid="file-list"] li', { hasText: 'torque arm.png' })
    await image.getByTestId('file-thumbnail').waitFor()
    // the thumbnail is fetched after the row shows: wait until it has decoded
    await expect.poll(() => image.getByTestId('file-thumbnail').evaluate(img => (img as HTMLImageElement).naturalWidth)).toBe(1)
    await screenshot(page, 'files-tab')

    // the CSV becomes a reading through the wizard, and its statistics show
    await page.locator('[data-testid="file-list"] li', { hasText: 'torque.csv' }).getByTestId('file-import').click()
    const wizard = page.getByTestId('csv-wizard')
    await wizard.getByTestId('csv-preview').waitFor()
    expect(await wizard.getByTestId('csv-value-column').inputValue()).toBe('torque')
    await wizard.getByTestId('csv-unit').fill('N·m')
    await wizard.getByTestId('csv-revision').selectOption('R1')
    await wizard.getByTestId('csv-commit').click()
    await wizard.getByTestId('csv-result').waitFor()
    // (41.2 + 41.9 + 40.8)/3 = 41.3, sd 0.557…, t(0.975, 2)·sd/√3 = 1.38…
    await expect(wizard.getByTestId('csv-result-mean').innerText()).resolves.toMatch(/^41\.3 ± 1\.4 N·m$/)
    await screenshot(page, 'csv-import-result')
    expect([...hosts]).toEqual(['127.0.0.1'])
    await context.close()
  })

  it('a Reviewer sees and opens files but gets no upload zone', async () => {
    const context = await newContext(browser)
    await signIn(context, w.reviewer)
    const page = await context.newPage()
    await goto(page, `/builds/${w.build.slug}?tab=files`)
    await page.getByTestId('file-list').waitFor()
    expect(await page.getByTestId('upload-zone').count()).toBe(0)
    expect(await page.getByTestId('import-csv').isDisabled()).toBe(true)
    await page.locator('[data-testid="file-list"] li', { hasText: 'torque.csv' }).getByTestId('file-open').click()
    const viewer = page.getByTestId('viewer-dialog')
    await viewer.getByTestId('csv-preview').waitFor()
    await expect(viewer.getByTestId('csv-preview').innerText()).resolves.toContain('41.9')

    // the imported CSV is evidence of its reading: on the revision page and the target page
    await goto(page, `/builds/${w.build.slug}/revisions/R1`)
    await page.locator('[data-testid="evidence"] [data-testid="file-list"] li', { hasText: 'torque.csv' }).waitFor()
    expect(await page.locator('[data-testid="evidence"] [data-testid="upload-zone"]').count()).toBe(0)
    await goto(page, `/builds/${w.build.slug}/targets/wheel_torque`)
    const onTarget = page.locator('[data-testid="evidence"] [data-testid="file-list"] li')
    await onTarget.first().waitFor()
    expect(await onTarget.allInnerTexts()).toEqual([expect.stringContaining('torque.csv')])
    await context.close()
  })
})
