/**
 * Browser test of ingest and viewing: a microscopist uploads a 16-bit stack with its fields CSV, opens it, and steps
 * through the frames. Needs the built client (`npx vite build`) and Debian's Chromium; skipped without them.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { createLabWithRoles, TEST_PASSWORD } from '../server/testApp'
import { browserAvailable, SCREENSHOT_DIR, startBrowserSession } from './browser'

const FRAMES = 5
const SIZE = 128
const FIELDS_MT = [-20, -10, 0, 10, 20]

/**
 * Stripe domains whose up-phase grows with the field (the wall positions move frame by frame), on a 16-bit scale with
 * a little deterministic noise (LCG, fixed seed 12345) so the frames are not flat.
 */
function stripeStack(): Uint16Array[] {
  let seed = 12345
  const noise = () => {
    seed = (seed * 1103515245 + 12345) % 2147483648
    return seed / 2147483648 - 0.5
  }
  return Array.from({ length: FRAMES }, (_, k) => {
    const threshold = -0.7 + (1.4 * k) / (FRAMES - 1)
    const data = new Uint16Array(SIZE * SIZE)
    for (let y = 0; y < SIZE; y++) {
      for (let x = 0; x < SIZE; x++) {
        const stripe = Math.sin((2 * Math.PI * (x + 0.35 * y)) / 32)
        const up = stripe > threshold
        data[y * SIZE + x] = Math.round((up ? 42000 : 18000) + 3000 * noise())
      }
    }
    return data
  })
}

async function conditionText(page: Page): Promise<string> {
  return (await page.getByTestId('frame-condition').textContent())?.trim() ?? ''
}

describe.skipIf(!browserAvailable)('image upload and viewer (browser)', () => {
  let session: Awaited<ReturnType<typeof startBrowserSession>>
  let folder: string
  let stackPath: string
  let csvPath: string
  let notImagePath: string

  beforeAll(async () => {
    session = await startBrowserSession()
    folder = mkdtempSync(path.join(tmpdir(), 'remanence-e2e-'))
    stackPath = path.join(folder, 'field-sweep.tif')
    csvPath = path.join(folder, 'field-sweep.csv')
    writeFileSync(stackPath, encodeTiff(stripeStack().map((data) => ({ width: SIZE, height: SIZE, data })), { pixelSizeNm: 250 }))
    writeFileSync(csvPath, `frame,field_mT\n${FIELDS_MT.map((f, i) => `${i},${f}`).join('\n')}\n`)
    notImagePath = path.join(folder, 'notes.png')
    writeFileSync(notImagePath, 'Objective 50x, exposure 200 ms: not an image at all.\n')
  })

  afterAll(async () => {
    await session?.close()
    if (folder) rmSync(folder, { recursive: true, force: true })
  })

  it('When a microscopist uploads a 5-frame stack with its fields CSV, then the viewer steps through the frames showing each field', async () => {
    const { people, project } = await createLabWithRoles('Viewer lab')
    const page = await session.newPage()
    await session.signIn(page, people.microscopist.email, TEST_PASSWORD)

    await page.goto(`${session.baseUrl}/images/upload`)
    await page.getByRole('heading', { name: 'Upload images' }).waitFor()
    // The lab has one project, so it is chosen already.
    await page.getByText(project.name).first().waitFor()
    await page.locator('input[aria-label="Image files"]').setInputFiles([stackPath, csvPath, notImagePath])
    await page.getByText('field-sweep.csv').waitFor()
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'image-upload-queued.png'), fullPage: true })

    await page.getByRole('button', { name: 'Upload 2 files' }).click()
    await page.getByText('Stored', { exact: true }).waitFor({ timeout: 30_000 })
    expect(await page.getByText('5 frames, 128 × 128 px, 16-bit').count()).toBe(1)
    // The other file fails alone, with the server's message and code.
    await page.getByText('Failed', { exact: true }).waitFor()
    expect(await page.getByRole('alert').filter({ hasText: 'unsupported-type' }).textContent()).toContain('notes.png')

    // The same stack again is recognised, not stored twice.
    await page.locator('input[aria-label="Image files"]').setInputFiles([stackPath])
    await page.getByRole('button', { name: 'Upload', exact: true }).click()
    await page.getByText('Duplicate', { exact: true }).waitFor({ timeout: 30_000 })
    await page.getByRole('link', { name: 'Open the existing image' }).waitFor()
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'image-upload-results.png'), fullPage: true })

    await page.getByRole('link', { name: 'Open image' }).click()
    await page.waitForURL(/\/images\/\d+$/)
    await page.getByRole('heading', { name: 'field-sweep.tif' }).waitFor()
    await page.locator('.image-canvas canvas').first().waitFor()
    // It opens at its cover frame: the middle one, half up and half down, has the most domain pattern.
    await expect.poll(() => conditionText(page)).toBe('0 mT')
    await page.getByRole('button', { name: 'Previous frame' }).click()
    await page.getByRole('button', { name: 'Previous frame' }).click()
    await expect.poll(() => conditionText(page)).toBe('−20 mT')

    const seen = [await conditionText(page)]
    for (let i = 1; i < FRAMES; i++) {
      await page.getByRole('button', { name: 'Next frame' }).click()
      await expect.poll(() => conditionText(page)).not.toBe(seen[seen.length - 1])
      seen.push(await conditionText(page))
    }
    // Negative fields read with a true minus sign (U+2212), as every number in the app.
    expect(seen).toEqual(FIELDS_MT.map((f) => `${f} mT`.replace('-', '−')))

    // Back to the middle frame, zoomed in on the domains, with the pixel readout under the cursor.
    await page.getByRole('button', { name: 'Next frame' }).click()
    await page.getByRole('button', { name: 'Next frame' }).click()
    await page.getByRole('button', { name: 'Next frame' }).click()
    await expect.poll(() => conditionText(page)).toBe('0 mT')
    await page.getByText('Loading frame…').waitFor({ state: 'hidden' })
    const box = (await page.locator('.image-canvas').first().boundingBox())!
    await page.mouse.move(box.x + box.width / 2, box.y + box.height / 2)
    await expect.poll(async () => page.getByLabel('Pixel under the cursor').first().textContent()).toMatch(/value \d+/)
    expect(await page.getByLabel('Scale bar').first().textContent()).toMatch(/µm/)
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'image-viewer.png'), fullPage: true })

    await page.getByText('Side by side').click()
    await page.locator('.image-canvas').nth(1).waitFor()
    await page.getByText('Viridis (perceptually uniform)').click()
    await page.mouse.move(box.x + box.width / 4, box.y + box.height / 2)
    await page.waitForTimeout(300)
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'image-viewer-side-by-side.png'), fullPage: true })
    await page.getByText('Side by side').click()
    await page.getByText('Grey', { exact: true }).click()

    // Calibrate: a line drawn across the fitted image spans a known number of image pixels.
    await page.getByRole('button', { name: 'Calibrate from scale bar' }).click()
    await page.getByText('Drag along the scale bar').waitFor()
    const stage = (await page.locator('.image-canvas__stage').first().boundingBox())!
    const y = stage.y + stage.height / 2
    await page.mouse.move(stage.x + stage.width / 2 - 100, y)
    await page.mouse.down()
    await page.mouse.move(stage.x + stage.width / 2, y, { steps: 5 })
    await page.mouse.move(stage.x + stage.width / 2 + 100, y, { steps: 5 })
    await page.mouse.up()
    const dialog = page.getByRole('dialog', { name: 'Calibrate from the scale bar' })
    await dialog.waitFor()
    await dialog.getByRole('spinbutton', { name: 'Real length' }).fill('10')
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'image-calibration.png'), fullPage: true })
    await dialog.getByRole('button', { name: 'Save pixel size' }).click()
    await page.getByText('from a scale bar').waitFor()
    const calibrated = Number(await page.locator('.image-metadata-panel .el-input-number input').inputValue())
    // 200 screen px at the fitted zoom are 200 / scale image px; 10 µm over them.
    const zoom = Number((await page.getByRole('button', { name: 'Zoom level' }).textContent())!.replace(/[^\d.]/g, '')) / 100
    expect(calibrated).toBeCloseTo((10_000 * zoom) / 200, -1)

    await page.goto(`${session.baseUrl}/images`)
    await page.getByRole('link', { name: 'field-sweep.tif' }).waitFor()
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'images-list.png'), fullPage: true })

    // The PI hands the stack to the lab's annotator from the list.
    const piPage = await session.newPage()
    await session.signIn(piPage, people.pi.email, TEST_PASSWORD)
    await piPage.goto(`${session.baseUrl}/images`)
    await piPage.getByRole('link', { name: 'field-sweep.tif' }).waitFor()
    await piPage.locator('.el-table__body .el-checkbox').first().click()
    await piPage.getByRole('button', { name: 'Assign to annotator' }).click()
    const assign = piPage.getByRole('dialog', { name: 'Assign to annotator' })
    await assign.locator('.el-select').click()
    await piPage.getByRole('option', { name: new RegExp(people.annotator.name) }).click()
    await piPage.screenshot({ path: path.join(SCREENSHOT_DIR, 'images-assign.png'), fullPage: true })
    await assign.getByRole('button', { name: 'Assign', exact: true }).click()
    await piPage.getByText(`Assigned every frame of 1 image to ${people.annotator.name}.`).waitFor()
    await piPage.getByRole('link', { name: 'field-sweep.tif' }).click()
    await piPage.getByText(`· ${people.annotator.name}`).first().waitFor()
  })
})
