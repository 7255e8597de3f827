/**
 * What has been measured on a sample, for the theory comparison: the latest analysis of every analysed frame of the
 * sample's images (masks saved in the workspace), and a summary of each stack run of those images — its medians and
 * the frame nearest the demagnetized state (smallest |M/Ms|, what the Kittel model describes, METHODS §7.2), with the
 * loop's coercive field and the Curie fit when the run had them.
 */
import { QueryTypes, type Sequelize } from 'sequelize'
import type { FrameMeasurements } from '../../shared/analysis/analyzeFrame'
import type { CurieSummary, LoopSummary } from '../../shared/analysis/analyzeStack'
import type { AnalysisStatus } from '../../shared/types/lab'
import type { SampleFrameMeasurementDto, SampleMeasurementsDto, SampleStackRunSummaryDto } from '../../shared/types/sampleMeasurements'
import type { SessionUser } from '../auth/sessionUser'
import { notFound } from '../errors'
import { Frame, Image, Sample, StackFrameResult, StackRun } from '../models'
import { findProjectFor, toSampleDto } from './projectService'

/** Stack runs listed per sample, newest first. */
const RUN_LIMIT = 50

interface LatestAnalysisRow {
  id: number
  frame_id: number
  /** Written only through the Analysis model, whose status is an AnalysisStatus. */
  status: AnalysisStatus
  created_at: Date
  measurements: FrameMeasurements | null
}

function median(values: (number | null | undefined)[]): number | null {
  const sorted = values.filter((v): v is number => typeof v === 'number' && Number.isFinite(v)).sort((a, b) => a - b)
  if (sorted.length === 0) return null
  const mid = sorted.length >> 1
  return sorted.length % 2 ? sorted[mid] : (sorted[mid - 1] + sorted[mid]) / 2
}

function summarizeRun(run: StackRun, image: Image, results: { frameIndex: number; measurements: FrameMeasurements }[]): SampleStackRunSummaryDto {
  const summary = (run.summary ?? {}) as { loop?: LoopSummary | null; curie?: CurieSummary | null }
  let nearest: (typeof results)[number] | null = null
  for (const r of results) {
    if (!nearest || Math.abs(r.measurements.magnetization) < Math.abs(nearest.measurements.magnetization)) nearest = r
  }
  const m = results.map((r) => r.measurements)
  return {
    runId: run.id,
    imageId: image.id,
    imageName: image.name,
    status: run.status,
    framesTotal: run.framesTotal,
    framesDone: run.framesDone,
    createdAt: run.createdAt.toISOString(),
    finishedAt: run.finishedAt?.toISOString() ?? null,
    pixelSizeNm: image.pixelSizeNm,
    framesMeasured: results.length,
    nearZeroFrame: nearest
      ? {
          index: nearest.frameIndex,
          magnetization: nearest.measurements.magnetization,
          meanWidthPx: nearest.measurements.meanWidthPx,
          meanWidthNm: nearest.measurements.meanWidthNm,
          periodPx: nearest.measurements.periodPx,
          periodNm: nearest.measurements.periodNm,
        }
      : null,
    medianWidthPx: median(m.map((x) => x.meanWidthPx)),
    medianWidthNm: median(m.map((x) => x.meanWidthNm)),
    medianPeriodPx: median(m.map((x) => x.periodPx)),
    medianPeriodNm: median(m.map((x) => x.periodNm)),
    coerciveField: summary.loop?.coerciveField ?? null,
    fieldUnit: summary.loop?.fieldUnit ?? null,
    tcK: summary.curie?.tc ?? null,
    beta: summary.curie?.beta ?? null,
  }
}

/** The sample with its measurements; 404 `sample-not-found` also for samples of labs the person is not in. */
export async function sampleMeasurements(sequelize: Sequelize, user: SessionUser, sampleId: number): Promise<SampleMeasurementsDto> {
  const sample = await Sample.findByPk(sampleId)
  if (!sample) throw notFound('sample')
  const project = await findProjectFor(user, sample.projectId).catch(() => {
    throw notFound('sample')
  })
  const images = await Image.findAll({ where: { sampleId, deletedAt: null }, order: [['id', 'ASC']] })
  const imageById = new Map(images.map((i) => [i.id, i]))
  const imageIds = images.map((i) => i.id)
  const empty: SampleMeasurementsDto = { sample: toSampleDto(sample), labId: project.labId, projectName: project.name, frames: [], stackRuns: [] }
  if (imageIds.length === 0) return empty

  const frames = await Frame.findAll({ where: { imageId: imageIds }, attributes: ['id', 'imageId', 'index', 'field', 'fieldUnit', 'temperatureK'] })
  const frameById = new Map(frames.map((f) => [f.id, f]))
  // Only the measurements of the newest analysis per frame (the distributions can be large and are not needed here).
  const latest =
    frames.length === 0
      ? []
      : await sequelize.query<LatestAnalysisRow>(
          `SELECT DISTINCT ON (frame_id) id, frame_id, status, created_at, results->'measurements' AS measurements
             FROM analyses WHERE frame_id IN (:frameIds) ORDER BY frame_id, id DESC`,
          { replacements: { frameIds: frames.map((f) => f.id) }, type: QueryTypes.SELECT },
        )
  const frameRows: SampleFrameMeasurementDto[] = latest.map((row) => {
    const frame = frameById.get(row.frame_id)!
    const image = imageById.get(frame.imageId)!
    const m = row.measurements
    return {
      analysisId: row.id,
      imageId: image.id,
      imageName: image.name,
      frameIndex: frame.index,
      field: frame.field,
      fieldUnit: frame.fieldUnit,
      temperatureK: frame.temperatureK,
      status: row.status,
      createdAt: new Date(row.created_at).toISOString(),
      pixelSizeNm: image.pixelSizeNm,
      magnetization: m?.magnetization ?? null,
      meanWidthPx: m?.meanWidthPx ?? null,
      meanWidthNm: m?.meanWidthNm ?? null,
      periodPx: m?.periodPx ?? null,
      periodNm: m?.periodNm ?? null,
    }
  })
  frameRows.sort((a, b) => b.createdAt.localeCompare(a.createdAt) || a.imageId - b.imageId || a.frameIndex - b.frameIndex)

  const runs = await StackRun.findAll({ where: { imageId: imageIds }, order: [['id', 'DESC']], limit: RUN_LIMIT })
  const results = runs.length
    ? await StackFrameResult.findAll({ where: { runId: runs.map((r) => r.id) }, attributes: ['runId', 'frameIndex', 'measurements'] })
    : []
  const stackRuns = runs.map((run) =>
    summarizeRun(
      run,
      imageById.get(run.imageId)!,
      results.filter((r) => r.runId === run.id && r.measurements).map((r) => ({ frameIndex: r.frameIndex, measurements: r.measurements as unknown as FrameMeasurements })),
    ),
  )
  return { ...empty, frames: frameRows, stackRuns }
}
