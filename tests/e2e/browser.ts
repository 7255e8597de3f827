/**
 * Browser-test harness: the real app (built client in dist/ + API) listening on a free loopback port against the
 * test PostgreSQL, s3rver and SMTP sink, driven by Debian's Chromium through playwright-core (never a downloaded
 * browser). Screenshots go to screenshots/ (git-ignored).
 */
import { existsSync, mkdirSync } from 'node:fs'
import type { AddressInfo } from 'node:net'
import { fileURLToPath } from 'node:url'
import { chromium, type Browser, type Page } from 'playwright-core'
import { startTestApp } from '../server/testApp'

export const CHROMIUM_PATH = '/usr/bin/chromium'
export const SCREENSHOT_DIR = fileURLToPath(new URL('../../screenshots/', import.meta.url))
export const browserAvailable = existsSync(CHROMIUM_PATH) && existsSync(fileURLToPath(new URL('../../dist/index.html', import.meta.url)))
// In CI a silently skipped browser test would hide a broken install: there, a missing browser or build is an error.
if (process.env.CI && !browserAvailable) throw new Error(`browser tests need ${CHROMIUM_PATH} and a built client (dist/): scripts/test.sh installs and builds both`)

export async function startBrowserSession() {
  const app = startTestApp()
  await app.deps.store.ensureBucket()
  const server = app.app.listen(0, '127.0.0.1')
  await new Promise<void>((resolve) => server.once('listening', () => resolve()))
  const baseUrl = `http://127.0.0.1:${(server.address() as AddressInfo).port}`
  const browser: Browser = await chromium.launch({
    executablePath: CHROMIUM_PATH,
    args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
  })
  mkdirSync(SCREENSHOT_DIR, { recursive: true })
  return {
    app,
    baseUrl,
    browser,
    async newPage(): Promise<Page> {
      const context = await browser.newContext({ viewport: { width: 1440, height: 900 } })
      return context.newPage()
    },
    async signIn(page: Page, email: string, password: string) {
      await page.goto(`${baseUrl}/sign-in`)
      await page.getByLabel('E-mail').fill(email)
      await page.getByLabel('Password').fill(password)
      await page.getByRole('button', { name: /sign in/i }).click()
      await page.waitForURL((url) => !url.pathname.startsWith('/sign-in'))
    },
    async close() {
      await browser.close()
      await new Promise<void>((resolve) => server.close(() => resolve()))
      await app.stop()
    },
  }
}
