/**
 * Wall motion (issue #8) as the API serves it. The story of a request: check access → read the image's motion rows
 * (pulse field and duration, or time, per frame, from its frames CSV) → fetch the original from the object store →
 * the whole series through shared/analysis/analyzeMotion in a worker thread of the analysis pool (the request thread
 * only awaits) → the result, kept in a small cache keyed by file, rows, recipe and engine version.
 * A sample's motion pools the steps of all its motion series as v(H) points (μ0H in mT, so files in Oe or A/m join)
 * and fits one creep law over them. Velocities, not frames, are pooled: series of different frame sizes or pixel sizes
 * combine, but series in px/s (no pixel size) do not join a fit in m/s (they are left out with a note).
 */
import { availableParallelism } from 'node:os'
import { ENGINE_VERSION } from '../../shared/analysis/engineVersion'
import { normalizeRecipe, type AnalysisRecipe } from '../../shared/analysis/recipe'
import { fitMotionCreep, motionRecipeDefaults, type MotionAnalysis, type MotionOptions } from '../../shared/analysis/analyzeMotion'
import type { MotionRow } from '../../shared/analysis/wallVelocity'
import { FIELD_UNITS, type FieldUnit } from '../../shared/units/magneticUnits'
import type { ImageMotionDto, MotionPointDto, SampleMotionDto, SampleMotionSeriesDto } from '../../shared/types/motion'
import type { SessionUser } from '../auth/sessionUser'
import { AppError } from '../errors'
import { Frame, Image, Sample } from '../models'
import type { ObjectStore } from '../storage/objectStore'
import { createAnalysisPool, type AnalysisPool } from '../analysis/analysisPool'
import type { ImageService } from './imageService'
import { resolveMeasurementScope } from './measuredFrames'

/** Recipe fields a request may set; registration is the motion analysis' own (analyzeMotion header). */
export type MotionRecipeInput = Partial<Omit<AnalysisRecipe, 'registerFrames'>>

/** Analyses kept (each a few hundred numbers); a page reload or the sample view reuses them. */
const CACHE_SIZE = 64

/** The motion rows of an image's frames, or null when the frames carry neither pulse durations nor times. */
export function motionRowsOf(frames: Pick<Frame, 'index' | 'pulseField' | 'pulseDurationS' | 'timeS'>[]): MotionRow[] | null {
  if (frames.length > 0 && frames.every((f) => f.pulseDurationS != null)) {
    return frames.map((f) => ({ frame: f.index, pulseDurationS: f.pulseDurationS!, ...(f.pulseField != null ? { pulseField: f.pulseField } : {}) }))
  }
  if (frames.length > 0 && frames.every((f) => f.timeS != null)) return frames.map((f) => ({ frame: f.index, timeS: f.timeS! }))
  return null
}

/** The motion series among `images` (frames with pulse durations or times, see motionRowsOf), in their order. */
export async function selectMotionSeries(images: Image[]): Promise<Image[]> {
  if (images.length === 0) return []
  const frames = await Frame.findAll({ where: { imageId: images.map((i) => i.id) }, attributes: ['imageId', 'index', 'pulseField', 'pulseDurationS', 'timeS'] })
  return images.filter((image) => motionRowsOf(frames.filter((f) => f.imageId === image.id).sort((a, b) => a.index - b.index)) !== null)
}

function fieldUnitOf(frames: Pick<Frame, 'fieldUnit'>[]): FieldUnit | null {
  const unit = frames.find((f) => f.fieldUnit)?.fieldUnit ?? null
  return unit !== null && (FIELD_UNITS as readonly string[]).includes(unit) ? (unit as FieldUnit) : null
}

/** A worker's error as the API error it stands for: decode errors keep their code and status; bad rows are 400. */
function toAppError(err: unknown, imageName: string): AppError {
  if (err instanceof AppError) return err
  const e = err as { name?: string; code?: string; status?: number; message?: string }
  if (typeof e.status === 'number' && typeof e.code === 'string') return new AppError(e.status, e.code, e.message ?? 'The image could not be read.')
  if (e.name === 'RangeError') return new AppError(400, 'invalid-motion-series', `${imageName}: ${e.message}`)
  return new AppError(500, 'motion-analysis-failed', `${imageName}: the motion analysis failed (${e.message ?? 'unknown error'}).`)
}

export function createMotionService(deps: { store: ObjectStore; images: ImageService; poolSize?: number }) {
  const { store, images } = deps
  let pool: AnalysisPool | null = null
  const cache = new Map<string, Promise<MotionAnalysis>>()

  function poolOf(): AnalysisPool {
    pool ??= createAnalysisPool({ size: deps.poolSize ?? Number(process.env.MOTION_WORKERS ?? Math.min(2, availableParallelism())) })
    return pool
  }

  function recipeFor(image: Image, input: MotionRecipeInput): AnalysisRecipe {
    try {
      const recipe = normalizeRecipe({ ...motionRecipeDefaults(image.width, image.height), ...input })
      if (recipe.background === 'reference' && (recipe.referenceFrame ?? 0) >= image.frameCount) {
        throw new RangeError(`recipe.referenceFrame ${recipe.referenceFrame} is not a frame of this image (it has ${image.frameCount}).`)
      }
      return recipe
    } catch (err) {
      throw new AppError(400, 'invalid-recipe', (err as Error).message)
    }
  }

  /** The analysis of one image already known to be readable by the person. */
  async function analyse(image: Image, recipe: AnalysisRecipe, options: { mu?: number; fitMu?: boolean }): Promise<MotionAnalysis> {
    const frames = await Frame.findAll({ where: { imageId: image.id }, order: [['index', 'ASC']] })
    const rows = motionRowsOf(frames)
    if (rows === null) {
      throw new AppError(
        400,
        'not-a-motion-series',
        `${image.name} is not a motion series: its frames have no pulse durations or times. Upload it with a frames CSV ` +
          '(frame,pulse_field_mT,pulse_duration_ns or frame,time_s).',
      )
    }
    const motionOptions: MotionOptions = { pixelSizeNm: image.pixelSizeNm, fieldUnit: fieldUnitOf(frames), ...options }
    const key = JSON.stringify([image.id, image.sha256, ENGINE_VERSION, recipe, rows, motionOptions])
    let result = cache.get(key)
    if (result === undefined) {
      result = (async () => {
        const bytes = new Uint8Array(await store.get(image.objectKey))
        const shared = poolOf().shareFile(bytes, image.name)
        try {
          return await poolOf().analyzeMotion(shared, recipe, rows, motionOptions)
        } catch (err) {
          throw toAppError(err, image.name)
        } finally {
          pool?.releaseFile(shared)
        }
      })()
      // A failure is not kept, so the next request tries again.
      result.catch(() => cache.delete(key))
      cache.set(key, result)
      if (cache.size > CACHE_SIZE) cache.delete(cache.keys().next().value as string)
    }
    return result
  }

  /** GET /api/images/:imageId/motion. */
  async function forImage(user: SessionUser, imageId: number, input: MotionRecipeInput, options: { mu?: number; fitMu?: boolean } = {}): Promise<ImageMotionDto> {
    const { image } = await images.findImageFor(user, imageId)
    const recipe = recipeFor(image, input)
    const motion = await analyse(image, recipe, options)
    const sample = image.sampleId ? await Sample.findByPk(image.sampleId) : null
    return { imageId: image.id, imageName: image.name, sample: sample ? { id: sample.id, name: sample.name } : null, engineVersion: ENGINE_VERSION, recipe, motion }
  }

  /**
   * Every motion series given (of one sample, already known to be readable by the person): each analysed, their
   * steps pooled as v(H) points in mT and one creep fit over them. GET /api/samples/:sampleId/motion and the
   * creep-slope comparison both come here, so they report the same fit.
   */
  async function pooledForSample(sample: Sample, motionImages: Image[], input: MotionRecipeInput = {}, options: { mu?: number; fitMu?: boolean } = {}): Promise<SampleMotionDto> {
    const series: SampleMotionSeriesDto[] = await Promise.all(
      motionImages.map(async (image): Promise<SampleMotionSeriesDto> => {
        try {
          const recipe = recipeFor(image, input)
          return { imageId: image.id, imageName: image.name, recipe, motion: await analyse(image, recipe, options), error: null }
        } catch (err) {
          const e = toAppError(err, image.name)
          if (e.status >= 500) throw e
          return { imageId: image.id, imageName: image.name, recipe: null, motion: null, error: { code: e.code, message: e.message } }
        }
      }),
    )
    const all: MotionPointDto[] = series.flatMap((s) =>
      (s.motion?.steps ?? []).flatMap((step) =>
        step.fieldMT === null
          ? []
          : [{ imageId: s.imageId, imageName: s.imageName, fromFrame: step.fromFrame, toFrame: step.toFrame, fieldMT: Math.abs(step.fieldMT), velocity: step.velocity, velocityStdErr: step.velocityStdErr, velocityUnit: step.velocityUnit }],
      ),
    )
    const notes: string[] = []
    if (motionImages.length === 0) notes.push('This sample has no motion series (images uploaded with a pulse or time frames CSV).')
    // Pool in the unit most points have; velocities in px/s (no pixel size) cannot join a fit in m/s.
    const inMetres = all.filter((p) => p.velocityUnit === 'm/s').length
    const velocityUnit = all.length === 0 ? null : inMetres >= all.length - inMetres ? 'm/s' : 'px/s'
    const points = all.filter((p) => p.velocityUnit === velocityUnit)
    if (points.length < all.length) notes.push(`${all.length - points.length} step(s) in another velocity unit (series without a pixel size, or with one) left out of the pooled fit.`)
    const fit = velocityUnit === null ? { creep: null, note: null } : fitMotionCreep(points.map((p) => ({ field: p.fieldMT, velocity: p.velocity, velocityStdErr: p.velocityStdErr })), { fieldUnit: 'mT', velocityUnit }, options)
    if (fit.note !== null && points.length > 0) notes.push(fit.note)
    return {
      sample: { id: sample.id, name: sample.name, annealTemperatureC: sample.annealTemperatureC },
      engineVersion: ENGINE_VERSION,
      series,
      points,
      velocityUnit,
      creep: fit.creep,
      notes,
    }
  }

  /** GET /api/samples/:sampleId/motion: every motion series of the sample, pooled v(H) and one creep fit. */
  async function forSample(user: SessionUser, sampleId: number, input: MotionRecipeInput, options: { mu?: number; fitMu?: boolean } = {}): Promise<SampleMotionDto> {
    const scope = await resolveMeasurementScope(user, { sampleId }, 'lab.read')
    return pooledForSample(scope.samples[0], await selectMotionSeries(scope.images), input, options)
  }

  return {
    forImage,
    forSample,
    pooledForSample,
    async close() {
      const running = pool
      pool = null
      cache.clear()
      await running?.close()
    },
  }
}

export type MotionService = ReturnType<typeof createMotionService>
