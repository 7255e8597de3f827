/**
 * Exports against the real PostgreSQL and s3rver: the measurements table as CSV (parsed back per RFC 4180) and XLSX
 * (read back with exceljs) checked cell by cell against the stored analyses and image rows; the mask as PNG; the
 * sample report; which analyses count (approved only unless drafts are asked for); permissions.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import ExcelJS from 'exceljs'
import { Jimp } from 'jimp'
import { createHash } from 'node:crypto'
import type request from 'supertest'
import { createLabWithRoles, signIn, startTestApp } from './testApp'
import { saveAutoMask, submitAndApprove, uploadImage, FIXTURE_RECIPE, type Session } from './analysisFixtures'
import { renderLabyrinth } from '../../scripts/sampleImages'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { analyzeFrame } from '../../shared/analysis/analyzeFrame'
import { LAB_ROLES, roleAllows, type LabRole } from '../../shared/auth/permissions'
import { Analysis, Image, Sample, StackRun } from '../../server/models'

/** RFC 4180 reader for the check (quoted fields, doubled quotes, CRLF records). */
function parseCsv(text: string): string[][] {
  const rows: string[][] = []
  let row: string[] = []
  let field = ''
  let quoted = false
  for (let i = 0; i < text.length; i++) {
    const c = text[i]
    if (quoted) {
      if (c === '"' && text[i + 1] === '"') {
        field += '"'
        i++
      } else if (c === '"') quoted = false
      else field += c
    } else if (c === '"') quoted = true
    else if (c === ',') {
      row.push(field)
      field = ''
    } else if (c === '\r' && text[i + 1] === '\n') {
      row.push(field)
      rows.push(row)
      row = []
      field = ''
      i++
    } else field += c
  }
  if (field !== '' || row.length) rows.push([...row, field])
  return rows
}

const binary = (res: request.Response, callback: (err: Error | null, body: Buffer) => void) => {
  const chunks: Buffer[] = []
  res.on('data', (c: Buffer) => chunks.push(c))
  res.on('end', () => callback(null, Buffer.concat(chunks)))
}

const FORMULA_SAMPLE = '=SUM(1,2) "quoted"'
const PIXEL_NM = 100

describe('exports', () => {
  let ctx: ReturnType<typeof startTestApp>
  let home: Awaited<ReturnType<typeof createLabWithRoles>>
  const s = {} as Record<LabRole | 'outsider', Session>
  let sample: Sample
  let calibrated: { imageId: number; frameIds: number[]; sha256: string }
  let uncalibrated: { imageId: number; frameIds: number[] }
  const approved: number[] = []
  let draftId: number
  // Fixed seeds: the same mazes every run.
  const framesA = [renderLabyrinth({ size: 128, periodPx: 14, seed: 31 }).image, renderLabyrinth({ size: 128, periodPx: 18, seed: 32 }).image]
  const frameB = renderLabyrinth({ size: 64, periodPx: 10, seed: 33 }).image

  beforeAll(async () => {
    ctx = startTestApp()
    await ctx.deps.store.ensureBucket()
    home = await createLabWithRoles('Export')
    for (const role of LAB_ROLES) s[role] = await signIn(ctx.app, home.people[role].email)
    s.outsider = await signIn(ctx.app, (await createLabWithRoles('ExportOther')).people.admin.email)
    sample = await Sample.create({ projectId: home.project.id, name: FORMULA_SAMPLE, thicknessNm: 1, annealTemperatureC: 350, annealDurationMin: 30, annealFieldMT: null })
    const a = await uploadImage(s.microscopist, home.project.id, { name: 'sweep, part 1.tif', frames: framesA, pixelSizeNm: PIXEL_NM, sampleId: sample.id, fieldsMT: [-5, 0] })
    calibrated = { ...a, sha256: createHash('sha256').update(Buffer.from(encodeTiff(framesA, { pixelSizeNm: PIXEL_NM }))).digest('hex') }
    uncalibrated = await uploadImage(s.microscopist, home.project.id, { name: 'plain.tif', frames: [frameB], pixelSizeNm: null, sampleId: sample.id })
    const a0 = await saveAutoMask(s.annotator, a.frameIds[0], framesA[0], PIXEL_NM)
    const b0 = await saveAutoMask(s.annotator, uncalibrated.frameIds[0], frameB, null)
    draftId = (await saveAutoMask(s.annotator, a.frameIds[1], framesA[1], PIXEL_NM)).id
    for (const id of [a0.id, b0.id]) {
      await submitAndApprove(s.annotator, s.reviewer, id)
      approved.push(id)
    }
  })
  afterAll(() => ctx.stop())

  const csv = (session: Session, query: string) => session.agent.get(`/api/exports/measurements.csv?${query}`)

  describe('GET /api/exports/measurements.csv', () => {
    it('When a project is exported, then one row per approved frame, units in the headers, and every number equals the stored measurement', async () => {
      const res = await csv(s.reviewer, `projectId=${home.project.id}`)
      expect(res.status).toBe(200)
      expect(res.headers['content-type']).toMatch(/^text\/csv; charset=utf-8/)
      expect(res.headers['content-disposition']).toMatch(/^attachment; filename="?remanence-measurements-project-\d+-\d{4}-\d{2}-\d{2}\.csv"?$/)
      expect(res.text.startsWith('\uFEFF')).toBe(true)
      // RFC 4180: every record ends in CRLF and no bare LF appears (no field here contains a line break).
      expect(res.text.endsWith('\r\n')).toBe(true)
      expect(/[^\r]\n/.test(res.text)).toBe(false)
      const [header, ...rows] = parseCsv(res.text.slice(1))
      for (const name of ['mean width (nm)', 'wall density (µm⁻¹)', 'M/Ms', 'period (nm)', 'field (mT)', 'temperature (K)', 'image', 'image SHA-256', 'frame index', 'recipe (JSON)', 'engine version', 'annotator', 'mask version', 'reviewer', 'approval time (UTC)']) {
        expect(header).toContain(name)
      }
      expect(rows.every((r) => r.length === header.length)).toBe(true)
      const col = (row: string[], name: string) => row[header.indexOf(name)]
      expect(rows.map((r) => Number(col(r, 'analysis id')))).toEqual(approved)

      for (const row of rows) {
        const analysis = (await Analysis.findByPk(Number(col(row, 'analysis id'))))!
        const m = (analysis.results as { measurements: Record<string, number | null> }).measurements
        const image = (await Image.findByPk(Number(col(row, 'image id'))))!
        const numeric: [string, string][] = [
          ['M/Ms', 'magnetization'],
          ['up fraction', 'upFraction'],
          ['mean width (nm)', 'meanWidthNm'],
          ['mean width (px)', 'meanWidthPx'],
          ['period (nm)', 'periodNm'],
          ['period (px)', 'periodPx'],
          ['wall density (µm⁻¹)', 'wallDensityPerUm'],
          ['wall density (px⁻¹)', 'wallDensityPerPx'],
          ['domain count', 'domainCount'],
          ['pixel size (nm)', 'pixelSizeNm'],
        ]
        for (const [name, key] of numeric) {
          // Null measurements are empty cells, never 0; numbers round-trip exactly (shortest decimal form).
          if (m[key] === null) expect(col(row, name), name).toBe('')
          else expect(Number(col(row, name)), name).toBe(m[key])
        }
        expect(col(row, 'image')).toBe(image.name)
        expect(col(row, 'image SHA-256')).toBe(image.sha256)
        expect(JSON.parse(col(row, 'recipe (JSON)'))).toEqual(analysis.recipe)
        expect(col(row, 'engine version')).toBe(analysis.engineVersion)
        expect(col(row, 'annotator')).toBe(home.people.annotator.name)
        expect(col(row, 'mask version')).toBe('1')
        expect(col(row, 'reviewer')).toBe(home.people.reviewer.name)
        expect(col(row, 'approval time (UTC)')).toBe(analysis.approvedAt!.toISOString())
        expect(col(row, 'status')).toBe('approved')
      }
      const [a0, b0] = rows
      // The SHA-256 of the bytes the test uploaded (provenance points at the original file).
      expect(col(a0, 'image SHA-256')).toBe(calibrated.sha256)
      expect(col(a0, 'image')).toBe('sweep, part 1.tif')
      expect(col(a0, 'field (mT)')).toBe('-5')
      expect(col(a0, 'field unit as recorded')).toBe('mT')
      expect(col(a0, 'temperature (K)')).toBe('')
      expect(Number(col(a0, 'mean width (nm)'))).toBeGreaterThan(0)
      // No pixel size → no nm or µm⁻¹ values: empty, never 0.
      expect(col(b0, 'mean width (nm)')).toBe('')
      expect(col(b0, 'wall density (µm⁻¹)')).toBe('')
      expect(col(b0, 'pixel size (nm)')).toBe('')
      expect(Number(col(b0, 'mean width (px)'))).toBeGreaterThan(0)
      // The recipe of the fixture is what was sent
      expect(JSON.parse(col(b0, 'recipe (JSON)'))).toEqual(FIXTURE_RECIPE)
    })

    it('When a text cell starts with = and holds commas and quotes, then it is quoted per RFC 4180 and prefixed with an apostrophe', async () => {
      const res = await csv(s.reviewer, `sampleId=${sample.id}`)
      // '=SUM(1,2) "quoted"' → '"''=SUM(1,2) ""quoted"""' on the wire
      expect(res.text).toContain(`"'=SUM(1,2) ""quoted"""`)
      const [header, row] = parseCsv(res.text.slice(1))
      expect(row[header.indexOf('sample')]).toBe(`'${FORMULA_SAMPLE}`)
      expect(row[header.indexOf('image')]).toBe('sweep, part 1.tif')
      // A negative number is a number, not text: no apostrophe.
      expect(row[header.indexOf('field (mT)')]).toBe('-5')
    })

    it('When drafts are included, then the draft frame appears with status draft and no reviewer; by default it does not', async () => {
      const without = parseCsv((await csv(s.pi, `imageId=${calibrated.imageId}`)).text.slice(1))
      const withDrafts = parseCsv((await csv(s.pi, `imageId=${calibrated.imageId}&includeDrafts=true`)).text.slice(1))
      const ids = (rows: string[][]) => rows.slice(1).map((r) => Number(r[rows[0].indexOf('analysis id')]))
      expect(ids(without)).toEqual([approved[0]])
      expect(ids(withDrafts)).toEqual([approved[0], draftId])
      const draftRow = withDrafts[2]
      expect(draftRow[withDrafts[0].indexOf('status')]).toBe('draft')
      expect(draftRow[withDrafts[0].indexOf('reviewer')]).toBe('')
      expect(draftRow[withDrafts[0].indexOf('approval time (UTC)')]).toBe('')
      expect(draftRow[withDrafts[0].indexOf('field (mT)')]).toBe('0')
    })

    it('When an approved frame\u2019s mask is edited, then the export keeps the approved analysis until the new one is approved', async () => {
      const frameId = uncalibrated.frameIds[0]
      const edited = await saveAutoMask(s.annotator, frameId, frameB, null, 1)
      const rows = parseCsv((await csv(s.reviewer, `imageId=${uncalibrated.imageId}`)).text.slice(1))
      expect(rows.slice(1).map((r) => Number(r[rows[0].indexOf('analysis id')]))).toEqual([approved[1]])
      const drafts = parseCsv((await csv(s.reviewer, `imageId=${uncalibrated.imageId}&includeDrafts=true`)).text.slice(1))
      expect(drafts.slice(1).map((r) => [Number(r[drafts[0].indexOf('analysis id')]), r[drafts[0].indexOf('mask version')]])).toEqual([[edited.id, '2']])
    })

    const roleCases = LAB_ROLES.map((role) => ({ role, allowed: roleAllows(role, 'export.tables') }))
    it.each(roleCases)('When the $role exports, then allowed=$allowed (permissions table)', async ({ role, allowed }) => {
      expect((await csv(s[role], `projectId=${home.project.id}`)).status).toBe(allowed ? 200 : 403)
    })

    it('When the scope is missing, doubled, or another lab\u2019s, then 400, 400 and 404', async () => {
      expect((await csv(s.pi, '')).status).toBe(400)
      expect((await csv(s.pi, `projectId=${home.project.id}&imageId=${calibrated.imageId}`)).status).toBe(400)
      expect((await csv(s.outsider, `projectId=${home.project.id}`)).status).toBe(404)
    })
  })

  describe('GET /api/exports/measurements.xlsx', () => {
    it('When read back with exceljs, then the Measurements sheet equals the stored values cell by cell and the About sheet names the provenance', async () => {
      const res = await s.reviewer.agent.get(`/api/exports/measurements.xlsx?projectId=${home.project.id}`).buffer(true).parse(binary)
      expect(res.status).toBe(200)
      expect(res.headers['content-type']).toBe('application/vnd.openxmlformats-officedocument.spreadsheetml.sheet')
      const workbook = new ExcelJS.Workbook()
      const bytes = res.body as Buffer
      await workbook.xlsx.load(bytes.buffer.slice(bytes.byteOffset, bytes.byteOffset + bytes.byteLength) as ArrayBuffer)
      expect(workbook.worksheets.map((w) => w.name)).toEqual(['Measurements', 'About'])
      const sheet = workbook.getWorksheet('Measurements')!
      const header = (sheet.getRow(1).values as unknown[]).slice(1) as string[]
      expect(header).toContain('mean width (nm)')
      expect(header).toContain('wall density (µm⁻¹)')
      expect(sheet.rowCount).toBe(1 + approved.length)
      const cell = (r: number, name: string) => sheet.getRow(r).getCell(header.indexOf(name) + 1).value
      for (let r = 2; r <= sheet.rowCount; r++) {
        const analysis = (await Analysis.findByPk(cell(r, 'analysis id') as number))!
        const m = (analysis.results as { measurements: Record<string, number | null> }).measurements
        for (const [name, key] of [
          ['M/Ms', 'magnetization'],
          ['mean width (nm)', 'meanWidthNm'],
          ['period (nm)', 'periodNm'],
          ['wall density (µm⁻¹)', 'wallDensityPerUm'],
          ['domain count', 'domainCount'],
        ]) {
          expect(cell(r, name), name).toBe(m[key] ?? null)
        }
        const image = (await Image.findByPk(cell(r, 'image id') as number))!
        expect(cell(r, 'image SHA-256')).toBe(image.sha256)
        expect(cell(r, 'reviewer')).toBe(home.people.reviewer.name)
        expect(JSON.parse(cell(r, 'recipe (JSON)') as string)).toEqual(analysis.recipe)
        expect(Math.abs((cell(r, 'approval time (UTC)') as Date).getTime() - analysis.approvedAt!.getTime())).toBeLessThan(1000)
      }
      // XLSX cells are typed: the formula-like sample name is a plain string, not a formula, and needs no prefix.
      expect(cell(2, 'sample')).toBe(FORMULA_SAMPLE)
      expect(cell(2, 'field (mT)')).toBe(-5)
      expect(cell(3, 'mean width (nm)')).toBeNull()

      const about = workbook.getWorksheet('About')!
      const facts = new Map<string, unknown>()
      about.eachRow((row) => facts.set(String(row.getCell(1).value), row.getCell(2).value))
      expect(facts.get('Exported from')).toBe('Remanence')
      expect(facts.get('Exported by')).toBe(`${home.people.reviewer.name} <${home.people.reviewer.email}>`)
      expect(Date.now() - new Date(facts.get('Export time (UTC)') as string).getTime()).toBeLessThan(60_000)
      expect(facts.get('Engine version of this server')).toMatch(/^\d+\.\d+\.\d+$/)
      expect(facts.get('Rows')).toBe(approved.length)
    })
  })

  describe('GET /api/frames/:frameId/annotations/latest/mask.png', () => {
    it('When fetched, then an 8-bit greyscale PNG of the saved mask with up = 255 and down = 0', async () => {
      const res = await s.annotator.agent.get(`/api/frames/${calibrated.frameIds[0]}/annotations/latest/mask.png`).buffer(true).parse(binary)
      expect(res.status).toBe(200)
      expect(res.headers['content-type']).toBe('image/png')
      const png = res.body as Buffer
      // IHDR (PNG spec): bytes 24 and 25 are bit depth and colour type; 8 and 0 = 8-bit greyscale.
      expect([png[24], png[25]]).toEqual([8, 0])
      const decoded = await Jimp.fromBuffer(png)
      const { mask } = analyzeFrame(framesA[0], FIXTURE_RECIPE, { pixelSizeNm: PIXEL_NM })
      expect([decoded.bitmap.width, decoded.bitmap.height]).toEqual([mask.width, mask.height])
      let mismatches = 0
      for (let i = 0; i < mask.data.length; i++) if (decoded.bitmap.data[i * 4] !== (mask.data[i] ? 255 : 0)) mismatches++
      expect(mismatches).toBe(0)
    })

    it('When the frame has no saved mask or belongs to another lab, then 404', async () => {
      const fresh = await uploadImage(s.microscopist, home.project.id, { name: 'unmasked.tif', frames: [renderLabyrinth({ size: 64, periodPx: 10, seed: 34 }).image], pixelSizeNm: null })
      expect((await s.pi.agent.get(`/api/frames/${fresh.frameIds[0]}/annotations/latest/mask.png`)).status).toBe(404)
      expect((await s.outsider.agent.get(`/api/frames/${calibrated.frameIds[0]}/annotations/latest/mask.png`)).status).toBe(404)
    })
  })

  describe('GET /api/samples/:sampleId/report', () => {
    it('When read, then the sample, its images with per-frame measurements and provenance, the stack summary and the approvals are there', async () => {
      // A finished stack run of image A, as the worker leaves it (the stack processing itself is tested in stackRuns.test.ts).
      const run = await StackRun.create({
        imageId: calibrated.imageId,
        recipe: FIXTURE_RECIPE as unknown as Record<string, unknown>,
        engineVersion: '1.0.0',
        status: 'done',
        framesTotal: 2,
        framesDone: 2,
        threshold: 0.5,
        summary: { loop: { fieldUnit: 'mT', coerciveField: 7.5, exchangeBias: 0.2, remanence: 0.8, squareness: 0.85, saturated: true }, curie: null },
        error: null,
        worker: null,
        heartbeatAt: null,
        startedAt: new Date(),
        finishedAt: new Date(),
        createdById: home.people.microscopist.id,
      })
      const res = await s.pi.agent.get(`/api/samples/${sample.id}/report`)
      expect(res.status).toBe(200)
      expect(res.body.sample).toMatchObject({ id: sample.id, name: FORMULA_SAMPLE, annealTemperatureC: 350 })
      expect(res.body.project).toEqual({ id: home.project.id, name: home.project.name })
      expect(res.body.generatedBy.id).toBe(home.people.pi.id)
      const imageA = res.body.images.find((i: { id: number }) => i.id === calibrated.imageId)
      expect(imageA.sha256).toBe(calibrated.sha256)
      expect(imageA.frames.map((f: { index: number; fieldMT: number }) => [f.index, f.fieldMT])).toEqual([
        [0, -5],
        [1, 0],
      ])
      const stored = (await Analysis.findByPk(approved[0]))!
      expect(imageA.frames[0].analysis).toMatchObject({ id: approved[0], status: 'approved', reviewer: { id: home.people.reviewer.id }, annotationVersion: 1 })
      expect(imageA.frames[0].analysis.measurements).toEqual((stored.results as { measurements: object }).measurements)
      // Approved only by default: the draft frame has no analysis in the report.
      expect(imageA.frames[1].analysis).toBeNull()
      expect(imageA.stackRun).toMatchObject({ id: run.id, status: 'done', loop: { coerciveField: 7.5, remanence: 0.8, fieldUnit: 'mT' } })
      expect(res.body.approvals.map((a: { analysisId: number }) => a.analysisId).sort()).toEqual([...approved].sort())
      // plain.tif was edited after approval (the test above): its approval is no longer the current analysis.
      expect(res.body.approvals.find((a: { analysisId: number }) => a.analysisId === approved[1]).current).toBe(false)
      const drafts = await s.pi.agent.get(`/api/samples/${sample.id}/report?includeDrafts=true`)
      expect(drafts.body.images.find((i: { id: number }) => i.id === calibrated.imageId).frames[1].analysis).toMatchObject({ id: draftId, status: 'draft', statusLabel: 'Draft' })
    })
  })
})
