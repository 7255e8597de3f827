/**
 * Browser test of the annotation workspace: an annotator opens a frame from the viewer, runs a preview segmentation,
 * paints a stroke, undoes and redoes it, saves, reloads and finds the stroke again; a second save against an older
 * version meets a conflict and is kept as a new version; a reviewer sees the same frame read-only. Needs the built
 * client (`npx vite build`) and Debian's Chromium; skipped without them.
 */
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { maskFromBase64, maskToBase64 } from '../../shared/imageio/maskEncoding'
import { renderLabyrinth } from '../../scripts/sampleImages'
import { createLabWithRoles, signIn, TEST_PASSWORD } from '../server/testApp'
import { browserAvailable, SCREENSHOT_DIR, startBrowserSession } from './browser'

/** The up pixel count the workspace shows (also exposed as a data attribute for this test). */
async function upPixels(page: Page): Promise<number> {
  return Number(await page.locator('.workspace-canvas').getAttribute('data-up-pixels'))
}

async function stageBox(page: Page) {
  return (await page.locator('.workspace-canvas__stage').boundingBox())!
}

describe.skipIf(!browserAvailable)('annotation workspace (browser)', () => {
  let session: Awaited<ReturnType<typeof startBrowserSession>>

  beforeAll(async () => {
    session = await startBrowserSession()
  })

  afterAll(async () => {
    await session?.close()
  })

  it('When an annotator previews, paints, undoes, redoes, saves and reloads, then the stroke is kept; a stale save is resolved; a reviewer only looks', async () => {
    const { people, project } = await createLabWithRoles('Workspace lab')
    // A 256² labyrinth (fixed seed 11), calibrated at 100 nm per pixel, uploaded by the lab's microscopist.
    const maze = renderLabyrinth({ size: 256, periodPx: 24, seed: 11 }).image
    const microscopist = await signIn(session.app.app, people.microscopist.email)
    const upload = await microscopist.agent
      .post(`/api/projects/${project.id}/images`)
      .set('x-csrf-token', microscopist.csrf)
      .attach('files', Buffer.from(encodeTiff([maze], { pixelSizeNm: 100 })), 'maze.tif')
    expect(upload.status).toBe(201)
    const imageId: number = upload.body[0].id
    const frameId: number = (await microscopist.agent.get(`/api/images/${imageId}`)).body.frames[0].id

    const page = await session.newPage()
    await session.signIn(page, people.annotator.email, TEST_PASSWORD)
    await page.goto(`${session.baseUrl}/images/${imageId}`)
    await page.getByRole('link', { name: 'Annotate frame 0' }).click()
    await page.waitForURL(new RegExp(`/frames/${frameId}/workspace`))
    await page.getByRole('heading', { name: 'Annotate frame 0' }).waitFor()
    await page.getByText('Loading frame…').waitFor({ state: 'hidden' })
    await page.getByText('Not saved yet').waitFor()
    expect(await upPixels(page)).toBe(0)

    // Preview segmentation in the browser's worker: the mask fills in and the preview's numbers appear.
    await page.getByRole('button', { name: 'Preview', exact: true }).click()
    await expect.poll(() => upPixels(page), { timeout: 30_000 }).toBeGreaterThan(0)
    await page.getByText('Preview · not saved').waitFor()
    const previewUp = await upPixels(page)
    expect(previewUp).toBeLessThan(256 * 256)

    // A horizontal stroke of the up phase across the middle of the frame (the Paint tool is chosen by its key).
    await page.keyboard.press('p')
    await page.keyboard.press('u')
    const box = await stageBox(page)
    const y = box.y + box.height / 2
    await page.mouse.move(box.x + box.width / 2 - 150, y)
    await page.mouse.down()
    await page.mouse.move(box.x + box.width / 2, y + 20, { steps: 8 })
    await page.mouse.move(box.x + box.width / 2 + 150, y, { steps: 8 })
    await page.mouse.up()
    await expect.poll(() => upPixels(page)).toBeGreaterThan(previewUp)
    const strokeUp = await upPixels(page)
    await page.getByText('Unsaved changes').waitFor()
    await page.mouse.move(box.x + box.width / 2 + 60, y - 40)
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'workspace-painted.png'), fullPage: true })

    await page.keyboard.press('Control+z')
    await expect.poll(() => upPixels(page)).toBe(previewUp)
    await page.keyboard.press('Control+Shift+z')
    await expect.poll(() => upPixels(page)).toBe(strokeUp)
    await page.keyboard.press('Control+z')
    await page.keyboard.press('Control+y')
    await expect.poll(() => upPixels(page)).toBe(strokeUp)

    // Save: version 1, measured by the server.
    await page.getByTestId('save-status').getByRole('button', { name: 'Save' }).click()
    await page.getByText('Saved v1').waitFor({ timeout: 30_000 })
    await page.getByText('Preview · not saved').waitFor({ state: 'hidden' })
    await page.getByRole('heading', { name: 'Measurements' }).waitFor()
    const saved = await microscopist.agent.get(`/api/frames/${frameId}/annotations/latest`)
    const savedMask = maskFromBase64(saved.body.mask)
    expect(savedMask.data.reduce((sum, v) => sum + v, 0)).toBe(strokeUp)
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'workspace-saved.png'), fullPage: true })

    // After a reload the stroke is there: the up count shown equals the saved one.
    await page.reload()
    await page.getByText('Saved v1').waitFor({ timeout: 30_000 })
    await expect.poll(() => upPixels(page)).toBe(strokeUp)
    await page.getByRole('tab', { name: /Versions/ }).click()
    await page.getByRole('button', { name: 'Open v1 read-only' }).click()
    await page.getByText(/Showing v1 by .*, read-only/).waitFor()
    await page.getByRole('button', { name: 'Back to my edit' }).click()
    await page.getByText(/Showing v1/).waitFor({ state: 'hidden' })

    // Every tool and key is listed in the help (also opened with "?").
    await page.keyboard.press('?')
    await page.getByText('Outline area').waitFor()
    // Let the popover finish fading in before the screenshot.
    await page.waitForTimeout(400)
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'workspace-help.png'), fullPage: true })
    await page.keyboard.press('?')
    await page.getByText('Outline area').waitFor({ state: 'hidden' })

    // The wall width gauge: a line across the stripes of the maze, fitted with a tanh step.
    await page.keyboard.press('g')
    const gauge = await stageBox(page)
    await page.mouse.move(gauge.x + gauge.width / 2 - 40, gauge.y + gauge.height / 2 - 60)
    await page.mouse.down()
    await page.mouse.move(gauge.x + gauge.width / 2 + 40, gauge.y + gauge.height / 2 - 60, { steps: 6 })
    await page.mouse.up()
    await page.getByRole('heading', { name: 'Wall profile' }).waitFor()
    await page.waitForTimeout(300)
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'workspace-gauge.png'), fullPage: true })

    // Meanwhile the PI saves version 2 through the API; the annotator's next save is based on v1 and conflicts.
    const pi = await signIn(session.app.app, people.pi.email)
    const piSave = await pi.agent
      .post(`/api/frames/${frameId}/annotations`)
      .set('x-csrf-token', pi.csrf)
      .send({ baseVersion: 1, mask: maskToBase64(savedMask), shapes: [], recipe: {} })
    expect(piSave.status).toBe(201)
    await page.keyboard.press('p')
    await page.keyboard.press('d')
    await page.mouse.move(gauge.x + gauge.width / 2, gauge.y + 40)
    await page.mouse.down()
    await page.mouse.move(gauge.x + gauge.width / 2 + 80, gauge.y + 60, { steps: 6 })
    await page.mouse.up()
    await page.keyboard.press('Control+s')
    const conflict = page.getByRole('dialog', { name: 'Someone saved this mask while you were editing' })
    await conflict.waitFor({ timeout: 30_000 })
    // Let the dialog finish fading in before the screenshot.
    await page.waitForTimeout(400)
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'workspace-conflict.png'), fullPage: true })
    await conflict.getByRole('button', { name: 'Keep mine as a new version' }).click()
    await page.getByText('Saved v3').waitFor({ timeout: 30_000 })
    await page.getByRole('tab', { name: /Versions/ }).click()
    await page.getByText('Conflict copy').first().waitFor()
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'workspace-versions.png'), fullPage: true })

    // A reviewer sees the frame read-only: no painting tools, no save.
    const reviewerPage = await session.newPage()
    await session.signIn(reviewerPage, people.reviewer.email, TEST_PASSWORD)
    await reviewerPage.goto(`${session.baseUrl}/frames/${frameId}/workspace?image=${imageId}`)
    await reviewerPage.getByText('Read-only').waitFor({ timeout: 30_000 })
    expect(await reviewerPage.getByRole('radio', { name: 'Paint phase' }).count()).toBe(0)
    expect(await reviewerPage.getByTestId('save-status').getByRole('button').count()).toBe(0)
    await reviewerPage.getByText('Loading frame…').waitFor({ state: 'hidden' })
    await reviewerPage.screenshot({ path: path.join(SCREENSHOT_DIR, 'workspace-reviewer.png'), fullPage: true })
  })
})
