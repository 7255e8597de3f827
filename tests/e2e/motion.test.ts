/**
 * Browser test of wall motion (issue #8): a microscopist's bubble-expansion series with its pulse CSV is uploaded
 * through the API; the person opens the image, follows "Wall motion", sees the steps, the v(H) plot with the creep
 * fit and the roughness, and a screenshot is taken. Needs the built client (`npx vite build`) and Debian's Chromium.
 * Ground truth is constructed (scripts/sampleImages.ts renderMotionSeries): creep slope C = 40 mT^¼.
 */
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { renderMotionSeries } from '../../scripts/sampleImages'
import { Sample } from '../../server/models'
import { createLabWithRoles, signIn, TEST_PASSWORD } from '../server/testApp'
import { browserAvailable, SCREENSHOT_DIR, startBrowserSession } from './browser'

describe.skipIf(!browserAvailable)('wall motion (browser)', () => {
  let session: Awaited<ReturnType<typeof startBrowserSession>>

  beforeAll(async () => {
    session = await startBrowserSession()
  })

  afterAll(async () => {
    await session?.close()
  })

  it('When a microscopist opens a motion series, then the motion page shows the v(H) plot and the creep fit', async () => {
    const { people, project } = await createLabWithRoles('Motion lab')
    const sample = await Sample.create({ projectId: project.id, name: 'KB24-A300', annealTemperatureC: 300 })
    // The demo scenario's series (seed 2431): 8 frames, 200 nm pixels, pulses of 3 → 9 mT, self-affine wall (ζ = 2/3).
    const series = renderMotionSeries({ seed: 2431, roughness: { zeta: 2 / 3, rmsPx: 2 } })
    const csv = `frame,pulse_field_mT,pulse_duration_us\n${series.pulseFieldsMT.map((h, i) => `${i},${h},${Number((series.pulseDurationsS[i] * 1e6).toPrecision(9))}`).join('\n')}\n`
    const api = await signIn(session.app.app, people.microscopist.email)
    const upload = await api.agent
      .post(`/api/projects/${project.id}/images`)
      .set('x-csrf-token', api.csrf)
      .field('sampleId', String(sample.id))
      .attach('files', Buffer.from(encodeTiff(series.frames, { pixelSizeNm: 200 })), 'bubble-growth.tif')
      .attach('frames', Buffer.from(csv), 'bubble-growth.csv')
    expect(upload.status).toBe(201)
    const imageId = upload.body[0].id as number

    const page = await session.newPage()
    await session.signIn(page, people.microscopist.email, TEST_PASSWORD)
    await page.goto(`${session.baseUrl}/images/${imageId}`)
    await page.getByRole('heading', { name: 'bubble-growth.tif' }).waitFor()
    await page.getByRole('link', { name: 'Wall motion' }).click()
    await page.waitForURL(/\/images\/\d+\/motion$/)

    await page.getByRole('heading', { name: 'Velocity against field' }).waitFor({ timeout: 60_000 })
    await page.getByTestId('velocity-chart').locator('canvas').first().waitFor()
    const steps = page.getByTestId('motion-steps')
    expect(await steps.locator('.el-table__body tr').count()).toBe(7)
    // Constructed creep slope C = 40 mT^¼; the fit reads it within 2 %.
    const slopeText = (await page.getByTestId('creep-slope').first().textContent()) ?? ''
    const slope = Number(slopeText.split('±')[0].trim())
    expect(Math.abs(slope / 40 - 1)).toBeLessThan(0.02)
    expect(await page.getByTestId('creep-fit').first().textContent()).toContain('Depinning field')
    await page.getByText(/Lemerle et al\. 1998/).first().waitFor()
    await page.getByTestId('roughness').waitFor()
    expect(await page.getByTestId('roughness').textContent()).toContain('2/3')
    await page.getByRole('heading', { name: 'All series of sample KB24-A300' }).waitFor()
    await page.getByRole('link', { name: 'bubble-growth.tif' }).first().waitFor()
    // Charts draw without animation (STACK.md gotcha 21); a short pause lets the sample chart lay out.
    await page.waitForTimeout(300)
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'motion.png'), fullPage: true })
  }, 120_000)
})
