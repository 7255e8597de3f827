/**
 * Browser test of the stack page: a microscopist's generated field sweep (scripts/sampleImages.ts, 128 px, with its
 * fields CSV) is uploaded and a run started through the API, processed in this process by the worker's own code
 * (`processStackRun` with a two-thread analysis pool, no worker process), and then read in Chromium: progress, the
 * loop plot with Hc as the API reports it, the jumps with their difference overlays, the frame table opening the
 * viewer at a frame, and the sample's theory panel. Needs the built client (`npx vite build`) and Debian's Chromium.
 */
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { renderFieldSweep, renderTemperatureRamp } from '../../scripts/sampleImages'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import type { StackRunDetailDto } from '../../shared/types/stack'
import { createAnalysisPool } from '../../server/analysis/analysisPool'
import { processStackRun } from '../../server/jobs/stackRunProcessor'
import { formatQuantity } from '../../src/formatQuantity'
import { createLabWithRoles, signIn, TEST_PASSWORD } from '../server/testApp'
import { browserAvailable, SCREENSHOT_DIR, startBrowserSession } from './browser'

/** Coercive field of the generated sweep, μ0H in mT; fields ±20 mT in 2 mT steps (41 frames). */
const HC_MT = 6

describe.skipIf(!browserAvailable)('stack page (browser)', () => {
  let session: Awaited<ReturnType<typeof startBrowserSession>>

  beforeAll(async () => {
    session = await startBrowserSession()
  })
  afterAll(async () => {
    await session?.close()
  })

  it('When a field sweep has been processed, then the stack page draws the loop with the API’s Hc, lists the jumps, and the sample page compares with theory', async () => {
    const { lab, people, project } = await createLabWithRoles('Stack page lab')
    const api = await signIn(session.app.app, people.microscopist.email)
    const sample = await api.agent
      .post(`/api/projects/${project.id}/samples`)
      .set('x-csrf-token', api.csrf)
      .send({ name: 'Co film S1', material: 'Co', thicknessNm: 100, substrate: 'Si / SiO2' })
      .expect(201)
    // Seed 5: a fixed random nucleation map, so every run of the test sees the same sweep.
    const sweep = renderFieldSweep({ size: 128, seed: 5, coerciveFieldMT: HC_MT })
    const csv = 'frame,field_mT\n' + sweep.fieldsMT.map((f, i) => `${i},${f}`).join('\n') + '\n'
    const upload = await api.agent
      .post(`/api/projects/${project.id}/images`)
      .set('x-csrf-token', api.csrf)
      .field('sampleId', String(sample.body.id))
      .attach('files', Buffer.from(encodeTiff(sweep.frames, { pixelSizeNm: 200 })), 'co-sweep.tif')
      .attach('frames', Buffer.from(csv), 'co-sweep.csv')
      .expect(201)
    const imageId = upload.body[0].id as number
    const started = await api.agent.post(`/api/images/${imageId}/stack-runs`).set('x-csrf-token', api.csrf).send({ recipe: {} }).expect(202)
    const runId = started.body.id as number

    const page = await session.newPage()
    await session.signIn(page, people.microscopist.email, TEST_PASSWORD)

    // Queued: nobody has taken the run yet.
    await page.goto(`${session.baseUrl}/stack-runs/${runId}`)
    await page.getByText('Waiting for a worker').first().waitFor()

    const pool = createAnalysisPool({ size: 2 })
    try {
      const outcome = await processStackRun({ sequelize: session.app.deps.sequelize, store: session.app.deps.store, pool }, runId, { workerName: 'e2e-stack-page', staleSeconds: 60 })
      expect(outcome).toBe('processed')
    } finally {
      await pool.close()
    }
    const run = (await api.agent.get(`/api/stack-runs/${runId}`).expect(200)).body as StackRunDetailDto
    expect(run.status).toBe('done')
    expect(run.loop?.fieldUnit).toBe('mT')
    const hc = run.loop!.coerciveField!
    // The generator's loop crosses zero at ±Hc; reading it between frames is good to half a field step (1 mT).
    expect(Math.abs(hc - HC_MT)).toBeLessThanOrEqual(1)

    // The page was polling: it turns to "Done" without a reload and draws the loop on a canvas.
    await page.getByTestId('run-status').getByText('Done', { exact: true }).waitFor({ timeout: 15_000 })
    await page.locator('.stack-loop-chart canvas').first().waitFor()
    expect(await page.getByTestId('loop-hc').textContent()).toContain(formatQuantity(hc, 'mT (μ0H)', 6))
    await page.getByRole('heading', { name: 'Jumps between frames' }).waitFor()
    await page.locator('.stack-jump-overlay__canvas').first().waitFor()
    await expect.poll(() => page.locator('.stack-jump-overlay figcaption').first().textContent()).toMatch(/^\s*\d+ px\s*\d+ px\s*$/)
    await page.locator('.stack-jump-size-chart canvas').first().waitFor()
    await page.waitForTimeout(300)
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'stack-run.png'), fullPage: true })
    await page.locator('.stack-run__section').filter({ hasText: 'Jumps between frames' }).screenshot({ path: path.join(SCREENSHOT_DIR, 'stack-run-jumps.png') })

    // A row of the frame table opens the viewer at that frame.
    const frame = 5
    await page.locator('.stack-frame-table .el-table__row').nth(frame).click()
    await page.waitForURL(new RegExp(`/images/${imageId}\\?frame=${frame}$`))
    await expect.poll(async () => (await page.getByTestId('frame-condition').textContent())?.trim()).toBe(`${sweep.fieldsMT[frame]} mT`)
    await page.getByText(`Run #${runId}`).waitFor()
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'stack-run-viewer-panel.png'), fullPage: true })
    await page.getByRole('button', { name: 'Process stack' }).click()
    const dialog = page.getByRole('dialog', { name: 'Process the whole stack' })
    await dialog.getByText('One for the whole stack').waitFor()
    // Element Plus fades the dialog in; wait for the end of the transition.
    await page.waitForTimeout(500)
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'stack-run-dialog.png') })
    await dialog.getByRole('button', { name: 'Cancel' }).click()
    await dialog.waitFor({ state: 'hidden' })

    // The sample page: the run's frame nearest M = 0 against the Kittel prediction for Co, 100 nm.
    await page.goto(`${session.baseUrl}/samples/${sample.body.id}`)
    await page.getByRole('heading', { name: 'Theory comparison' }).waitFor()
    await page.locator('.sample-theory-table__row--bloch-width').waitFor()
    // METHODS.md check #48 [D]: Co, A 30 pJ/m, K 410 kJ/m³ → δ_B = 26.87 nm.
    expect(await page.locator('.sample-theory-table__row--bloch-width').textContent()).toContain('26.87 nm')
    expect(await page.locator('.sample-theory-table__row--kittel-width').textContent()).toMatch(/\d nm mean width/)
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'sample-theory.png'), fullPage: true })

    // A lab material, started from the built-in Co entry with a film's own Ms, becomes the panel's choice.
    await page.getByRole('button', { name: 'Add lab material' }).click()
    const materialDialog = page.getByRole('dialog', { name: 'Add a lab material' })
    await materialDialog.getByLabel('Ms (MA/m)').fill('1.2')
    await materialDialog.getByLabel('Source').fill('Own SQUID loop of film S1, 2026')
    await materialDialog.getByRole('button', { name: 'Add material' }).click()
    await materialDialog.waitFor({ state: 'hidden' })
    await expect.poll(() => page.locator('.sample-theory-constants').textContent()).toContain('1.2 MA/m')
    expect(await page.locator('.sample-theory-constants').textContent()).toContain('Own SQUID loop of film S1, 2026')
    const stored = (await api.agent.get(`/api/labs/${lab.id}/materials`).expect(200)).body
    expect(stored).toEqual([expect.objectContaining({ name: 'Co (lab)', msAPerM: 1.2e6, aJPerM: 30e-12, kJPerM3: 410e3 })])
    await page.screenshot({ path: path.join(SCREENSHOT_DIR, 'sample-theory-lab-material.png'), fullPage: true })
  }, 180_000)

  it('When a temperature series has been processed, then the page shows the contrast against T with the fitted Tc and the reference exponents', async () => {
    const { people, project } = await createLabWithRoles('Curie page lab')
    const api = await signIn(session.app.app, people.microscopist.email)
    // Seed 5 as in tests/server/stackRuns.test.ts: constructed contrast ∝ (1 − T/390 K)^0.35 on 300…420 K.
    const ramp = renderTemperatureRamp({ seed: 5, size: 128, curieTemperatureK: 390, beta: 0.35 })
    const csv = 'frame,temperature_K\n' + ramp.temperaturesK.map((t, i) => `${i},${t}`).join('\n') + '\n'
    const upload = await api.agent
      .post(`/api/projects/${project.id}/images`)
      .set('x-csrf-token', api.csrf)
      .attach('files', Buffer.from(encodeTiff(ramp.frames, { pixelSizeNm: 100 })), 'ramp.tif')
      .attach('frames', Buffer.from(csv), 'ramp.csv')
      .expect(201)
    const started = await api.agent.post(`/api/images/${upload.body[0].id}/stack-runs`).set('x-csrf-token', api.csrf).send({ recipe: {} }).expect(202)
    const runId = started.body.id as number
    const pool = createAnalysisPool({ size: 2 })
    try {
      await processStackRun({ sequelize: session.app.deps.sequelize, store: session.app.deps.store, pool }, runId, { workerName: 'e2e-curie-page', staleSeconds: 60 })
    } finally {
      await pool.close()
    }
    const run = (await api.agent.get(`/api/stack-runs/${runId}`).expect(200)).body as StackRunDetailDto
    const tc = run.curie!.tc!
    expect(Math.abs(tc - 390)).toBeLessThan(5)

    const page = await session.newPage()
    await session.signIn(page, people.microscopist.email, TEST_PASSWORD)
    await page.goto(`${session.baseUrl}/stack-runs/${runId}`)
    await page.getByRole('heading', { name: 'Temperature series: Curie fit' }).waitFor()
    await page.locator('.stack-curie-chart canvas').first().waitFor()
    expect(await page.getByTestId('curie-fit').textContent()).toContain(`${formatQuantity(tc, '', 5)} ±`)
    for (const name of ['Mean field', '3-D Ising', '3-D Heisenberg', '2-D Ising', '3-D XY']) await page.getByRole('cell', { name, exact: true }).waitFor()
    await page.waitForTimeout(300)
    await page.locator('.stack-run__section').filter({ hasText: 'Temperature series' }).screenshot({ path: path.join(SCREENSHOT_DIR, 'stack-run-curie.png') })
  }, 180_000)
})
