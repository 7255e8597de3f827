/**
 * Browser test of lab collaboration: a lab with three samples annealed at 250, 300 and 350 °C, each imaged as a
 * 3-frame labyrinth whose period grows with the temperature (scripts/sampleImages.ts), masks saved, submitted and
 * approved through the API (tests/server/analysisFixtures.ts). The PI compares mean width across the anneal
 * temperatures in Chromium, sees the plot and the pairwise tests, exports XLSX, saves the view and opens it by link.
 * A second test walks the review page (pinned comment, approve), the sample report, lab admin and API tokens.
 * Needs the built client (`npx vite build`) and Debian's Chromium; skipped without them.
 */
import { readFileSync } from 'node:fs'
import path from 'node:path'
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import type { Page } from 'playwright-core'
import { renderLabyrinth } from '../../scripts/sampleImages'
import type { LabRole } from '../../shared/auth/permissions'
import { createLabWithRoles, signIn, TEST_PASSWORD } from '../server/testApp'
import { saveAutoMask, submitAndApprove, uploadImage, type Session } from '../server/analysisFixtures'
import { linkToken, waitForMail } from '../server/mailbox'
import { browserAvailable, SCREENSHOT_DIR, startBrowserSession } from './browser'

const SIZE = 128
const PIXEL_NM = 100
/** Labyrinth periods (px) per anneal temperature: wider domains after a hotter anneal, three frames each. */
const SERIES = [
  { temperatureC: 250, periods: [10, 11, 12] },
  { temperatureC: 300, periods: [14, 15, 16] },
  { temperatureC: 350, periods: [18, 19, 20] },
] as const

const shot = (page: Page, name: string) => page.screenshot({ path: path.join(SCREENSHOT_DIR, name), fullPage: true })

describe.skipIf(!browserAvailable)('lab collaboration (browser)', () => {
  let session: Awaited<ReturnType<typeof startBrowserSession>>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  const api = {} as Record<LabRole, Session>
  const sampleIds: number[] = []
  /** A fourth frame of the 300 °C image, submitted and waiting for review. */
  let waitingAnalysisId = 0

  beforeAll(async () => {
    session = await startBrowserSession()
    home = await createLabWithRoles('Anneal series lab')
    for (const role of ['microscopist', 'annotator', 'reviewer', 'pi'] as const) api[role] = await signIn(session.app.app, home.people[role].email)

    for (const [k, step] of SERIES.entries()) {
      const sample = await api.microscopist.agent
        .post(`/api/projects/${home.project.id}/samples`)
        .set('x-csrf-token', api.microscopist.csrf)
        .send({ name: `CoFeB ${step.temperatureC} °C`, material: 'CoFeB', thicknessNm: 1.1, substrate: 'Si/SiO2', annealTemperatureC: step.temperatureC, annealDurationMin: 60, annealAtmosphere: 'Ar' })
        .expect(201)
      sampleIds.push(sample.body.id)
      // Seeds fixed per sample and frame so every run of the test sees the same images; the 300 °C image gets a
      // fourth frame that stays waiting for review.
      const periods = step.temperatureC === 300 ? [...step.periods, 15] : [...step.periods]
      const frames = periods.map((p, i) => renderLabyrinth({ size: SIZE, periodPx: p, seed: 700 + 10 * k + i }).image)
      const { frameIds } = await uploadImage(api.microscopist, home.project.id, { name: `cofeb-${step.temperatureC}.tif`, frames, pixelSizeNm: PIXEL_NM, sampleId: sample.body.id })
      for (let i = 0; i < frames.length; i++) {
        const analysis = await saveAutoMask(api.annotator, frameIds[i], frames[i], PIXEL_NM)
        if (i < step.periods.length) await submitAndApprove(api.annotator, api.reviewer, analysis.id)
        else {
          await api.annotator.agent.post(`/api/analyses/${analysis.id}/submit`).set('x-csrf-token', api.annotator.csrf).send({}).expect(200)
          waitingAnalysisId = analysis.id
        }
      }
    }
  })

  afterAll(async () => {
    await session?.close()
  })

  it('When the PI compares mean width across three anneal temperatures, then the plot, the pairwise tests and an XLSX export follow, and a saved view opens by link', async () => {
    const page = await session.newPage()
    await session.signIn(page, home.people.pi.email, TEST_PASSWORD)

    await page.goto(`${session.baseUrl}/compare`)
    await page.getByRole('heading', { name: 'Compare', exact: true }).waitFor()
    // The lab has one project, so it is chosen already; mean width by anneal temperature is the default choice.
    await page.locator('.compare-controls__project').getByText(home.project.name).waitFor()
    await page.getByRole('button', { name: 'Compare', exact: true }).click()

    await page.getByRole('heading', { name: 'Mean domain width (nm) by anneal temperature' }).waitFor({ timeout: 30_000 })
    await page.locator('.compare-chart svg').first().waitFor()
    // Three boxes (one path each) and the nine approved frames as points.
    expect(await page.locator('.compare-chart svg path').count()).toBeGreaterThan(9)
    const pairs = page.getByLabel('Pairwise tests')
    for (const pair of ['250 °C vs 300 °C', '250 °C vs 350 °C', '300 °C vs 350 °C']) await pairs.getByText(pair).waitFor()
    const groups = await page.getByLabel('Groups', { exact: true }).locator('tbody tr').allInnerTexts()
    expect(groups).toHaveLength(3)
    for (const [i, row] of groups.entries()) expect(row).toContain(`${SERIES[i].temperatureC} °C`)
    await shot(page, 'compare-mean-width.png')

    const [download] = await Promise.all([page.waitForEvent('download'), page.getByRole('button', { name: 'XLSX' }).click()])
    expect(download.suggestedFilename()).toMatch(/\.xlsx$/)
    const file = readFileSync((await download.path())!)
    // An XLSX workbook is a ZIP archive: "PK" first.
    expect(file.subarray(0, 2).toString('latin1')).toBe('PK')
    expect(file.length).toBeGreaterThan(2000)

    await page.getByRole('button', { name: 'Save as view' }).click()
    const prompt = page.getByRole('dialog', { name: 'Save as view' })
    await prompt.getByRole('textbox').fill('Width vs anneal T')
    await prompt.getByRole('button', { name: 'Save' }).click()
    await page.waitForURL(/\/compare\?view=\d+$/)
    await page.locator('.compare-saved-views').getByText('Width vs anneal T').waitFor()
    const link = page.url()

    // Drafts switched on: the banner says so.
    await page.locator('.compare-controls__drafts .el-switch').click()
    await page.getByRole('button', { name: 'Compare', exact: true }).click()
    await page.getByText('Drafts included — not reviewed').waitFor()
    await shot(page, 'compare-with-drafts.png')

    // The saved link, opened by the reviewer in a page of their own, shows the same comparison.
    const reviewerPage = await session.newPage()
    await session.signIn(reviewerPage, home.people.reviewer.email, TEST_PASSWORD)
    await reviewerPage.goto(link)
    await reviewerPage.getByText('Saved view “Width vs anneal T”').waitFor({ timeout: 30_000 })
    await reviewerPage.getByLabel('Pairwise tests').getByText('250 °C vs 350 °C').waitFor()
    await reviewerPage.getByText('Drafts included — not reviewed').waitFor({ state: 'detached' })
  })

  it('When a reviewer pins a comment and approves, then the history shows it, and the report, lab admin and token pages read well', async () => {
    const page = await session.newPage()
    await session.signIn(page, home.people.reviewer.email, TEST_PASSWORD)

    await page.goto(`${session.baseUrl}/review`)
    await page.getByRole('button', { name: /Open the analysis of cofeb-300\.tif, frame 3/ }).waitFor()
    await page.locator('.el-loading-mask').first().waitFor({ state: 'detached' })
    await shot(page, 'review-queue.png')
    await page.getByRole('button', { name: /Open the analysis of cofeb-300\.tif, frame 3/ }).click()
    await page.waitForURL(new RegExp(`/analyses/${waitingAnalysisId}$`))
    await page.getByTestId('review-status').getByText('Waiting for review').waitFor()
    await page.getByText('Loading frame…').waitFor({ state: 'hidden' })

    const stage = (await page.locator('.review-canvas__stage').boundingBox())!
    await page.mouse.click(stage.x + stage.width / 2 + 40, stage.y + stage.height / 2 - 30)
    await page.getByText(/Pinned at x \d/).waitFor()
    await page.getByLabel('New comment').fill('The wall here looks merged with its neighbour; please check.')
    await page.getByRole('button', { name: 'Add comment' }).click()
    await page.getByLabel('Pin 1').waitFor()
    await page.getByRole('button', { name: 'Approve' }).click()
    await page.getByTestId('review-status').getByText('Approved').waitFor()
    await page.locator('.review-history').getByText('Status: Waiting for review → Approved').waitFor()
    await page.waitForTimeout(200)
    await shot(page, 'review-analysis.png')

    const piPage = await session.newPage()
    await session.signIn(piPage, home.people.pi.email, TEST_PASSWORD)
    await piPage.goto(`${session.baseUrl}/samples/${sampleIds[1]}/report`)
    await piPage.getByRole('heading', { name: 'CoFeB 300 °C' }).waitFor()
    await piPage.getByText('Images and measurements').waitFor()
    expect(await piPage.getByLabel('Approvals').locator('tbody tr').count()).toBe(4)
    await shot(piPage, 'sample-report.png')
    await piPage.emulateMedia({ media: 'print' })
    expect(await piPage.locator('.app-shell__aside').isVisible()).toBe(false)
    await shot(piPage, 'sample-report-print.png')
    await piPage.emulateMedia({ media: 'screen' })

    await piPage.goto(`${session.baseUrl}/lab-admin`)
    await piPage.getByRole('heading', { name: 'Members' }).waitFor()
    await piPage.getByRole('button', { name: 'Invite someone' }).click()
    await piPage.getByRole('dialog').getByText('Principal investigator', { exact: true }).waitFor()
    await piPage.waitForTimeout(300)
    await shot(piPage, 'lab-admin-invite.png')
    const invitee = `new.person.${home.lab.id}@test.example`
    await piPage.getByRole('dialog').getByLabel('E-mail').fill(invitee)
    await piPage.getByRole('dialog').getByText('Reviewer', { exact: true }).click()
    await piPage.getByRole('button', { name: 'Send invitation' }).click()
    await piPage.getByLabel('Invitations').getByText(invitee).waitFor()
    await piPage.waitForTimeout(300)
    await shot(piPage, 'lab-admin.png')

    // The e-mailed link, opened signed out: the invitee joins as a reviewer and lands signed in.
    const token = linkToken(await waitForMail(invitee, /Invitation to/), '/accept-invitation')
    const guest = await session.newPage()
    await guest.goto(`${session.baseUrl}/accept-invitation?token=${encodeURIComponent(token)}`)
    await guest.getByText(home.lab.name, { exact: true }).waitFor()
    await guest.getByLabel('Your name').fill('Nadia Kowalski')
    await guest.getByLabel('Password', { exact: true }).fill('four unrelated words here')
    await guest.getByLabel('Password again').fill('four unrelated words here')
    await shot(guest, 'accept-invitation.png')
    await guest.getByRole('button', { name: `Join ${home.lab.name}` }).click()
    await guest.waitForURL(`${session.baseUrl}/`)
    await guest.getByText('Nadia Kowalski').first().waitFor()
    // The same link a second time: used.
    await guest.goto(`${session.baseUrl}/accept-invitation?token=${encodeURIComponent(token)}`)
    await guest.getByText('This invitation was already used.').waitFor()
    await shot(guest, 'accept-invitation-used.png')

    // Forgotten password: the sign-in page's link, the request, and the e-mailed link's form.
    const signedOut = await session.newPage()
    await signedOut.goto(`${session.baseUrl}/sign-in`)
    await signedOut.getByRole('link', { name: 'Forgot password?' }).click()
    await signedOut.getByRole('heading', { name: 'Reset your password' }).waitFor()
    await signedOut.getByLabel('E-mail').fill(home.people.annotator.email)
    await signedOut.getByRole('button', { name: 'Send reset link' }).click()
    await signedOut.getByText('Check your inbox').waitFor()
    await shot(signedOut, 'reset-password-sent.png')
    const resetToken = linkToken(await waitForMail(home.people.annotator.email, /Reset your Remanence password/), '/reset-password')
    await signedOut.goto(`${session.baseUrl}/reset-password?token=${encodeURIComponent(resetToken)}`)
    await signedOut.getByRole('heading', { name: 'Choose a new password' }).waitFor()
    await shot(signedOut, 'reset-password-form.png')

    await piPage.goto(`${session.baseUrl}/settings/tokens`)
    await piPage.getByLabel('Token name').fill('analysis notebook')
    await piPage.getByRole('button', { name: 'Create token' }).click()
    const secret = await piPage.getByLabel('New API token').inputValue()
    expect(secret).toMatch(/^rmn_/)
    await piPage.waitForTimeout(300)
    await shot(piPage, 'api-tokens.png')
    // The token reads the export it was made for.
    const csv = await fetch(`${session.baseUrl}/api/exports/measurements.csv?projectId=${home.project.id}`, { headers: { Authorization: `Bearer ${secret}` } })
    expect(csv.status).toBe(200)
  })
})
