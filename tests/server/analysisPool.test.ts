/**
 * The analysis worker pool (server/analysis/analysisPool.ts): a stack analysed in worker threads gives exactly the
 * one-thread result of shared/analysis/analyzeStack.ts, frames land by index, a damaged frame is reported with its
 * index while the others are kept, and the pool stays usable. Files on disk are read by path, and an upload's frames
 * are rendered there; threads started nicer than the request thread are. Needs no database (it sits in the server project because it starts worker threads).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import { mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs'
import { tmpdir } from 'node:os'
import path from 'node:path'
import { createAnalysisPool, measureMaskInPool, type AnalysisPool } from '../../server/analysis/analysisPool'
import { StackFramesError, analyzeStackInPool, decodingMaskAt, type PooledStackAnalysis } from '../../server/analysis/analyzeStackInPool'
import { measureMask, preprocessFrame } from '../../shared/analysis/analyzeFrame'
import { analyzeStack, type StackAnalysis, type StackMeta } from '../../shared/analysis/analyzeStack'
import { normalizeRecipe, type AnalysisRecipe } from '../../shared/analysis/recipe'
import { decodeFrame, decodeImage, probeImage } from '../../shared/imageio/decodeImage'
import { decodeMask, encodeMask } from '../../shared/imageio/maskEncoding'
import { renderFrame } from '../../server/analysis/frameRendering'
import { encodeTiff } from '../../shared/imageio/encodeTiff'
import { renderFieldSweep, renderTemperatureRamp } from '../../scripts/sampleImages'
import { breakPage } from './damagedTiff'

/**
 * The whole result as text, masks included (the pool's decoded from their encoding), so "equal" means byte-identical.
 */
function serialize(result: StackAnalysis | PooledStackAnalysis): string {
  const { threshold, frames, loop, curie } = result
  const masks = 'masks' in result ? result.masks : result.encodedMasks.map(decodeMask)
  return JSON.stringify({ threshold, frames, masks, loop, curie }, (_key, value: unknown) => (value instanceof Uint8Array ? Buffer.from(value).toString('base64') : value))
}

const sweep = renderFieldSweep({ size: 128, seed: 77, maxFieldMT: 10, stepMT: 2 })
const sweepBytes = encodeTiff(sweep.frames, { pixelSizeNm: 80 })
const sweepMeta: StackMeta = { pixelSizeNm: 80, fieldUnit: 'mT', frames: sweep.fieldsMT.map((field) => ({ field, temperatureK: null })) }

const folder = mkdtempSync(path.join(tmpdir(), 'remanence-pool-'))
afterAll(() => rmSync(folder, { recursive: true, force: true }))

function fileWith(name: string, bytes: Uint8Array): string {
  const file = path.join(folder, name)
  writeFileSync(file, bytes)
  return file
}

describe('analysis pool', () => {
  let pool: AnalysisPool

  beforeAll(async () => {
    pool = createAnalysisPool({ size: 3 })
    await pool.ready()
  })
  afterAll(async () => {
    await pool.close()
  })

  it('When a field sweep is analysed in the pool, then the result equals the one-thread analysis byte for byte', async () => {
    const recipe = normalizeRecipe({})
    const { frames } = await decodeImage(sweepBytes, 'sweep.tif')
    const single = analyzeStack(frames, recipe, sweepMeta)
    const pooled = await analyzeStackInPool(pool, sweepBytes, 'sweep.tif', recipe, sweepMeta)
    expect(pooled.loop).not.toBeNull()
    expect(serialize(pooled)).toBe(serialize(single))
  })

  it.each<[string, Partial<AnalysisRecipe>]>([
    ['a reference frame and drift registration', { background: 'reference', referenceFrame: 0, registerFrames: true }],
    ['per-frame k-means', { method: 'kmeans', background: 'none', smoothingSigma: 0 }],
  ])('When the recipe uses %s, then pool and one thread still agree byte for byte', async (_name, options) => {
    const recipe = normalizeRecipe(options)
    const { frames } = await decodeImage(sweepBytes, 'sweep.tif')
    expect(serialize(await analyzeStackInPool(pool, sweepBytes, 'sweep.tif', recipe, sweepMeta))).toBe(serialize(analyzeStack(frames, recipe, sweepMeta)))
  })

  it('When a temperature ramp is analysed in the pool, then the Curie fit equals the one-thread one', async () => {
    const ramp = renderTemperatureRamp({ size: 64, seed: 5, temperaturesK: [300, 320, 340, 360, 380, 390, 395, 400, 410] })
    const bytes = encodeTiff(ramp.frames)
    const meta: StackMeta = { pixelSizeNm: null, fieldUnit: null, frames: ramp.temperaturesK.map((t) => ({ field: null, temperatureK: t })) }
    const recipe = normalizeRecipe({})
    const pooled = await analyzeStackInPool(pool, bytes, 'ramp.tif', recipe, meta)
    expect(pooled.curie).not.toBeNull()
    expect(serialize(pooled)).toBe(serialize(analyzeStack(ramp.frames, recipe, meta)))
  })

  it('When encoded masks are asked for in any order, then decodingMaskAt gives back the mask of that frame', async () => {
    const { frames } = await decodeImage(sweepBytes, 'sweep.tif')
    const { masks } = analyzeStack(frames.slice(0, 4), normalizeRecipe({ stackThreshold: 'per-frame' }), { ...sweepMeta, frames: sweepMeta.frames.slice(0, 4) })
    const maskAt = decodingMaskAt(masks.map(encodeMask))
    for (const index of [0, 1, 1, 2, 0, 3, 3]) expect(Buffer.from(maskAt(index).data).equals(Buffer.from(masks[index].data))).toBe(true)
  })

  it('When frames are requested out of order, then every outcome carries the index it was asked for', async () => {
    const file = pool.shareFile(sweepBytes, 'sweep.tif')
    try {
      const indices = [7, 0, 10, 3, 9, 1]
      const outcomes = await pool.measurePass(file, indices, normalizeRecipe({ stackThreshold: 'per-frame' }), { pixelSizeNm: 80 })
      expect(outcomes.map((o) => o.index)).toEqual(indices)
      const { frames } = await decodeImage(sweepBytes, 'sweep.tif')
      for (const outcome of outcomes) {
        expect(outcome.ok).toBe(true)
        if (outcome.ok) expect(outcome.value.measurements).toEqual(analyzeStack([frames[outcome.index]], normalizeRecipe({ stackThreshold: 'per-frame' }), { pixelSizeNm: 80, fieldUnit: null, frames: [{ field: null, temperatureK: null }] }).frames[0])
      }
    } finally {
      pool.releaseFile(file)
    }
  })

  it('When one frame of the file is damaged, then it is reported with its index, the others are kept and the pool still works', async () => {
    const broken = breakPage(sweepBytes, 4)
    const file = pool.shareFile(broken, 'broken.tif')
    const indices = sweep.frames.map((_, i) => i)
    try {
      const outcomes = await pool.measurePass(file, indices, normalizeRecipe({}), { pixelSizeNm: 80, threshold: 15000 })
      const failed = outcomes.filter((o) => !o.ok)
      expect(failed.map((o) => o.index)).toEqual([4])
      expect(failed[0].ok === false && failed[0].error.message).toContain('broken.tif')
      expect(failed[0].ok === false && failed[0].error.code).toBe('corrupt-image')
      expect(outcomes.filter((o) => o.ok)).toHaveLength(indices.length - 1)
    } finally {
      pool.releaseFile(file)
    }
    const error = await analyzeStackInPool(pool, broken, 'broken.tif', normalizeRecipe({}), sweepMeta).catch((e: unknown) => e)
    expect(error).toBeInstanceOf(StackFramesError)
    expect((error as StackFramesError).failures.map((f) => f.index)).toEqual([4])
    expect((error as StackFramesError).message).toContain('frame 4')
    // The same pool then analyses the intact file.
    const { frames } = await decodeImage(sweepBytes, 'sweep.tif')
    expect(serialize(await analyzeStackInPool(pool, sweepBytes, 'sweep.tif', normalizeRecipe({}), sweepMeta))).toBe(serialize(analyzeStack(frames, normalizeRecipe({}), sweepMeta)))
  })

  describe('a file opened by path', () => {
    it('When its frames are rendered in the pool, then each comes back with its raw pixels and the derivatives rendered in this thread', async () => {
      const file = pool.openFile(fileWith('sweep.tif', sweepBytes), 'sweep.tif')
      try {
        expect(await pool.probe(file)).toEqual(await probeImage(sweepBytes, 'sweep.tif'))
        const indices = [3, 0, 10]
        const rendered = await Promise.all(indices.map((index) => pool.renderFrame(file, index)))
        for (const [k, index] of indices.entries()) {
          const frame = await decodeFrame(sweepBytes, 'sweep.tif', index)
          const local = await renderFrame(frame)
          expect(Buffer.from(rendered[k].pixels)).toEqual(Buffer.from(frame.data.buffer, frame.data.byteOffset, frame.data.byteLength))
          expect(Buffer.from(rendered[k].preview)).toEqual(Buffer.from(local.preview))
          expect(Buffer.from(rendered[k].thumbnail)).toEqual(Buffer.from(local.thumbnail))
        }
      } finally {
        pool.releaseFile(file)
      }
    })

    it('When one of its pages is damaged, then rendering that frame fails with corrupt-image and its neighbours still render', async () => {
      const file = pool.openFile(fileWith('broken.tif', breakPage(sweepBytes, 2)), 'broken.tif')
      try {
        const error = await pool.renderFrame(file, 2).catch((e: unknown) => e)
        expect(error).toMatchObject({ code: 'corrupt-image', status: 400 })
        expect((error as Error).message).toContain('broken.tif')
        expect((await pool.renderFrame(file, 1)).pixels.byteLength).toBe(128 * 128 * 2)
      } finally {
        pool.releaseFile(file)
      }
    })

    it('When the path does not exist, then its tasks fail and the pool keeps working', async () => {
      const file = pool.openFile(path.join(folder, 'gone.tif'), 'gone.tif')
      await expect(pool.renderFrame(file, 0)).rejects.toThrow(/ENOENT/)
      pool.releaseFile(file)
      const shared = pool.shareFile(sweepBytes, 'sweep.tif')
      expect((await pool.probe(shared)).frameCount).toBe(sweep.frames.length)
      pool.releaseFile(shared)
    })
  })

  it('When a saved mask is measured in the pool, then the measurements equal the one-thread ones', async () => {
    const recipe = normalizeRecipe({})
    const frame = sweep.frames[5]
    const { masks } = analyzeStack([frame], recipe, { pixelSizeNm: 80, fieldUnit: null, frames: [{ field: null, temperatureK: null }] })
    const local = measureMask(masks[0], { pixelSizeNm: 80, image: preprocessFrame(frame, recipe), detail: true })
    const pooled = await measureMaskInPool(pool, masks[0], { pixelSizeNm: 80, frame, recipe, detail: true })
    expect(pooled).toEqual(local)
    expect(pooled.measurements.contrast).not.toBeNull()
  })

  it.runIf(process.platform === 'linux')('When started with a niceness (as the web server does), then its threads run at that niceness and this thread does not', async () => {
    // /proc/<pid>/task/<tid>/stat field 19 is the niceness (proc(5), Linux man-pages).
    const nicenessOf = (tid: string) => {
      const stat = readFileSync(`/proc/${process.pid}/task/${tid}/stat`, 'utf8')
      return Number(stat.slice(stat.lastIndexOf(')') + 2).split(' ')[16])
    }
    const before = new Set(readdirSync(`/proc/${process.pid}/task`))
    const nicePool = createAnalysisPool({ size: 2, niceness: 10 })
    try {
      await nicePool.ready()
      const added = readdirSync(`/proc/${process.pid}/task`).filter((tid) => !before.has(tid))
      expect(added.map(nicenessOf).filter((n) => n === 10)).toHaveLength(2)
      expect(nicenessOf(String(process.pid))).toBe(0)
    } finally {
      await nicePool.close()
    }
  })

  it('When the pool is closed, then new work is refused with a clear error', async () => {
    const other = createAnalysisPool({ size: 1 })
    await other.close()
    await expect(other.measureMask({ width: 1, height: 1, data: new Uint8Array([1]) }, { pixelSizeNm: null })).rejects.toThrow('closed')
  })
})
