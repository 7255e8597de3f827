/**
 * `npm run screenshots`: with `npm start` running, sign in as each demo role in headless Chromium (Debian's, through
 * playwright-core) and save a screenshot of the pages that role works in, into screenshots/ (git-ignored).
 * Usage: tsx scripts/screenshots.ts [--base http://127.0.0.1:5180] [--only <role>]
 */
import { mkdirSync } from 'node:fs'
import { chromium } from 'playwright-core'
import { DEMO_PASSWORD, DEMO_PEOPLE } from './demoScenario'

const arg = (name: string) => {
  const i = process.argv.indexOf(name)
  return i >= 0 ? process.argv[i + 1] : undefined
}
const base = arg('--base') ?? `http://127.0.0.1:${process.env.PORT ?? 5180}`
const only = arg('--only')
const outDir = 'screenshots'
mkdirSync(outDir, { recursive: true })

const PAGES: Record<string, string[]> = {
  admin: ['/', '/lab-admin', '/projects', '/deleted-items'],
  pi: ['/', '/projects', '/images', '/compare', '/deleted-items'],
  microscopist: ['/images', '/images/upload', '/samples'],
  annotator: ['/', '/images', '/queue'],
  reviewer: ['/review', '/images'],
}

const browser = await chromium.launch({
  executablePath: '/usr/bin/chromium',
  args: ['--headless', '--no-sandbox', '--disable-gpu', '--disable-background-networking', '--disable-component-update', '--disable-sync', '--no-first-run', '--disable-quic'],
})
try {
  const anonymous = await browser.newPage({ viewport: { width: 1440, height: 900 } })
  await anonymous.goto(`${base}/sign-in`)
  await anonymous.waitForLoadState('networkidle')
  await anonymous.screenshot({ path: `${outDir}/sign-in.png` })
  for (const person of DEMO_PEOPLE) {
    if (only && person.role !== only) continue
    const context = await browser.newContext({ viewport: { width: 1440, height: 900 } })
    const page = await context.newPage()
    page.on('pageerror', (err) => console.error(`[${person.role}] page error: ${err.message}`))
    await page.goto(`${base}/sign-in`)
    await page.getByLabel('E-mail').fill(person.email)
    await page.getByLabel('Password').fill(DEMO_PASSWORD)
    await page.getByRole('button', { name: /sign in/i }).click()
    await page.waitForURL((url) => !url.pathname.startsWith('/sign-in'))
    for (const path of PAGES[person.role] ?? ['/']) {
      await page.goto(`${base}${path}`)
      await page.waitForLoadState('networkidle')
      await page.waitForTimeout(400)
      const file = `${outDir}/${person.role}${path.replace(/\//g, '_') || '_home'}.png`
      await page.screenshot({ path: file, fullPage: true })
      console.log(`saved ${file}`)
    }
    await context.close()
  }
} finally {
  await browser.close()
}
