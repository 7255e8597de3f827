/** Stack runs as the API sees them: start one (queued for a worker), list them, read progress and results. */
import { QueryTypes, type Sequelize } from 'sequelize'
import { normalizeRecipe, type AnalysisRecipe } from '../../shared/analysis/recipe'
import { ENGINE_VERSION } from '../../shared/analysis/engineVersion'
import type { FrameMeasurements } from '../../shared/analysis/analyzeFrame'
import type { CurieSummary, LoopSummary } from '../../shared/analysis/analyzeStack'
import type { StackRunDetailDto, StackRunDto, StackRunWorkerDto } from '../../shared/types/stack'
import type { SessionUser } from '../auth/sessionUser'
import { AppError, notFound } from '../errors'
import { Frame, StackFrameResult, StackRun } from '../models'
import type { JobQueue } from '../jobs/jobQueue'
import type { ImageService } from './imageService'
import { recordAudit } from './auditService'

export function toRunDto(run: StackRun): StackRunDto {
  return {
    id: run.id,
    imageId: run.imageId,
    recipe: run.recipe as unknown as AnalysisRecipe,
    engineVersion: run.engineVersion,
    status: run.status,
    framesTotal: run.framesTotal,
    framesDone: run.framesDone,
    threshold: run.threshold,
    error: run.error,
    createdAt: run.createdAt.toISOString(),
    startedAt: run.startedAt?.toISOString() ?? null,
    finishedAt: run.finishedAt?.toISOString() ?? null,
  }
}

export function createStackRunService(deps: { sequelize: Sequelize; jobs: JobQueue; images: ImageService }) {
  const { jobs, images } = deps

  async function start(user: SessionUser, imageId: number, recipeInput: Partial<AnalysisRecipe>): Promise<StackRunDto> {
    const { image, labId } = await images.findImageFor(user, imageId, 'analysis.run')
    let recipe: AnalysisRecipe
    try {
      recipe = normalizeRecipe(recipeInput)
    } catch (err) {
      throw new AppError(400, 'invalid-recipe', (err as Error).message)
    }
    if (recipe.background === 'reference' && (recipe.referenceFrame ?? 0) >= image.frameCount) {
      throw new AppError(400, 'invalid-recipe', `recipe.referenceFrame ${recipe.referenceFrame} is not a frame of this image (it has ${image.frameCount}).`)
    }
    const run = await StackRun.create({
      imageId,
      recipe: recipe as unknown as Record<string, unknown>,
      engineVersion: ENGINE_VERSION,
      framesTotal: image.frameCount,
      threshold: null,
      summary: null,
      error: null,
      worker: null,
      heartbeatAt: null,
      startedAt: null,
      finishedAt: null,
      createdById: user.id,
    })
    try {
      await jobs.sendStackRun(run.id)
    } catch (err) {
      await run.destroy()
      throw new AppError(503, 'jobs-unavailable', `The job queue is not reachable; the run was not started (${(err as Error).message}).`)
    }
    await recordAudit({ labId, actorId: user.id, action: 'stack-run.start', entityType: 'image', entityId: imageId, after: { runId: run.id } })
    return toRunDto(run)
  }

  async function list(user: SessionUser, imageId: number): Promise<StackRunDto[]> {
    await images.findImageFor(user, imageId)
    const runs = await StackRun.findAll({ where: { imageId }, order: [['id', 'DESC']], limit: 50 })
    return runs.map(toRunDto)
  }

  async function detail(user: SessionUser, runId: number): Promise<StackRunDetailDto> {
    const run = await StackRun.findByPk(runId)
    if (!run) throw notFound('stack-run')
    await images.findImageFor(user, run.imageId).catch(() => {
      throw notFound('stack-run')
    })
    const [results, frames, workers] = await Promise.all([
      StackFrameResult.findAll({ where: { runId }, order: [['frameIndex', 'ASC']] }),
      Frame.findAll({ where: { imageId: run.imageId }, order: [['index', 'ASC']] }),
      deps.sequelize.query<StackRunWorkerDto>(
        `SELECT worker AS name, count(*)::int AS frames, worker = :owner AS owner FROM stack_frame_claims WHERE run_id = :runId
         GROUP BY worker ORDER BY frames DESC, name`,
        { replacements: { runId, owner: run.worker ?? '' }, type: QueryTypes.SELECT },
      ),
    ])
    const summary = (run.summary ?? {}) as { loop?: LoopSummary | null; curie?: CurieSummary | null }
    return {
      ...toRunDto(run),
      frames: frames.map((f) => {
        const r = results.find((x) => x.frameIndex === f.index)
        return { index: f.index, field: f.field, fieldUnit: f.fieldUnit, temperatureK: f.temperatureK, measurements: (r?.measurements ?? null) as FrameMeasurements | null, error: r?.error ?? null }
      }),
      workers,
      loop: summary.loop ?? null,
      curie: summary.curie ?? null,
    }
  }

  async function frameMask(user: SessionUser, runId: number, index: number, store: { get(key: string): Promise<Buffer> }): Promise<string> {
    await detail(user, runId)
    const result = await StackFrameResult.findOne({ where: { runId, frameIndex: index } })
    if (!result?.maskKey) throw notFound('mask')
    return (await store.get(result.maskKey)).toString('base64')
  }

  return { start, list, detail, frameMask }
}

export type StackRunService = ReturnType<typeof createStackRunService>
