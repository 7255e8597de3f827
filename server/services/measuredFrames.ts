/**
 * Which measurements count, in one place for the exports, the comparisons and the sample report.
 *
 * Per frame, the newest analysis with measurements counts: with `includeDrafts = false` (the default everywhere) the
 * newest *approved* one, so editing the mask of an approved frame does not change what is reported until the new
 * version is approved; with `includeDrafts = true` the newest of any status, flagged `draft` unless approved.
 * Per image, the newest stack run counts for the stack-level results (loop, Curie fit): a run is treated as approved
 * when it finished with status 'done' (stack runs have no review step; their recipe and engine version are
 * recorded); a run that finished 'done-with-errors' counts only with drafts included, flagged as a draft.
 */
import { QueryTypes, type Sequelize } from 'sequelize'
import type { FrameMeasurements } from '../../shared/analysis/analyzeFrame'
import type { CurieSummary, LoopSummary } from '../../shared/analysis/analyzeStack'
import type { AnalysisStatus } from '../../shared/types/lab'
import { FIELD_UNITS, convertField, type FieldUnit } from '../../shared/units/magneticUnits'
import type { LabAction } from '../../shared/auth/permissions'
import type { SessionUser } from '../auth/sessionUser'
import { assertLabAction } from '../auth/guards'
import { AppError, notFound } from '../errors'
import { Annotation, Frame, Image, Lab, Project, Sample, User } from '../models'

export type MeasurementScope = { imageId: number } | { sampleId: number } | { projectId: number } | { sampleIds: number[] }

export interface ResolvedScope {
  labId: number
  lab: Lab
  /** Plain words for files and report headers, e.g. `project "Anneal series"`. */
  description: string
  images: Image[]
  samples: Sample[]
}

/**
 * Load the images and samples of a scope the person may see, checking `action` in its lab. Unknown ids and other
 * labs' ids answer 404; samples from different labs answer 400 `samples-in-different-labs`.
 */
export async function resolveMeasurementScope(user: SessionUser, scope: MeasurementScope, action: LabAction): Promise<ResolvedScope> {
  let project: Project | null = null
  let samples: Sample[] = []
  let imageWhere: Record<string, unknown>
  let description: string
  let what: string
  if ('imageId' in scope) {
    what = 'image'
    const image = await Image.findOne({ where: { id: scope.imageId, deletedAt: null } })
    if (!image) throw notFound('image')
    project = await Project.findOne({ where: { id: image.projectId, deletedAt: null } })
    samples = image.sampleId ? await Sample.findAll({ where: { id: image.sampleId } }) : []
    imageWhere = { id: image.id }
    description = `image "${image.name}"`
  } else if ('projectId' in scope) {
    what = 'project'
    project = await Project.findOne({ where: { id: scope.projectId, deletedAt: null } })
    samples = project ? await Sample.findAll({ where: { projectId: project.id }, order: [['id', 'ASC']] }) : []
    imageWhere = { projectId: scope.projectId }
    description = `project "${project?.name}"`
  } else {
    what = 'sample'
    const ids = 'sampleId' in scope ? [scope.sampleId] : [...new Set(scope.sampleIds)]
    samples = await Sample.findAll({ where: { id: ids }, order: [['id', 'ASC']] })
    if (samples.length !== ids.length) throw notFound('sample')
    const projects = await Project.findAll({ where: { id: [...new Set(samples.map((s) => s.projectId))], deletedAt: null } })
    if (projects.length !== new Set(samples.map((s) => s.projectId)).size) throw notFound('sample')
    for (const p of projects) assertLabAction(user, p.labId, 'lab.read', 'sample')
    if (new Set(projects.map((p) => p.labId)).size > 1) throw new AppError(400, 'samples-in-different-labs', 'Choose samples of one lab.')
    project = projects[0]
    imageWhere = { sampleId: ids }
    description = samples.length === 1 ? `sample "${samples[0].name}"` : `${samples.length} samples`
  }
  if (!project) throw notFound(what)
  assertLabAction(user, project.labId, 'lab.read', what)
  assertLabAction(user, project.labId, action, what)
  const [images, lab] = await Promise.all([Image.findAll({ where: { ...imageWhere, deletedAt: null }, order: [['id', 'ASC']] }), Lab.findByPk(project.labId)])
  return { labId: project.labId, lab: lab!, description, images, samples }
}

export interface MeasuredFrame {
  analysisId: number
  status: AnalysisStatus
  /** True unless the analysis is approved. */
  draft: boolean
  frame: { id: number; index: number; field: number | null; fieldUnit: string | null; fieldMT: number | null; temperatureK: number | null }
  image: Image
  sample: Sample | null
  measurements: FrameMeasurements
  recipe: Record<string, unknown>
  engineVersion: string
  annotationVersion: number | null
  annotator: { id: number; name: string } | null
  reviewer: { id: number; name: string } | null
  approvedAt: Date | null
}

/** μ0H in mT from a stored field and its unit; null when either is missing or the unit is unknown. */
export function fieldInMilliTesla(field: number | null, unit: string | null): number | null {
  if (field === null || unit === null || !(FIELD_UNITS as readonly string[]).includes(unit)) return null
  return convertField(field, unit as FieldUnit, 'mT')
}

interface CountedAnalysisRow {
  id: number
  frameId: number
  annotationId: number | null
  recipe: Record<string, unknown>
  engineVersion: string
  status: AnalysisStatus
  createdById: number | null
  approvedById: number | null
  approvedAt: Date | null
  measurements: FrameMeasurements
}

/**
 * The counted analysis of every frame of `images` (see the file header), ordered by image then frame index.
 * Frames without a counted analysis are left out.
 */
export async function selectMeasuredFrames(sequelize: Sequelize, images: Image[], samples: Sample[], includeDrafts: boolean): Promise<MeasuredFrame[]> {
  if (images.length === 0) return []
  // DISTINCT ON keeps the first row per frame in the ORDER BY: the newest counted analysis. Only the measurements
  // are read from the results, not the (large) distributions.
  const rows = await sequelize.query<CountedAnalysisRow>(
    `SELECT DISTINCT ON (a.frame_id) a.id, a.frame_id AS "frameId", a.annotation_id AS "annotationId", a.recipe,
        a.engine_version AS "engineVersion", a.status, a.created_by_id AS "createdById", a.approved_by_id AS "approvedById",
        a.approved_at AS "approvedAt", a.results -> 'measurements' AS measurements
     FROM analyses a JOIN frames f ON f.id = a.frame_id
     WHERE f.image_id IN (:imageIds) AND a.error IS NULL AND a.results -> 'measurements' IS NOT NULL
       ${includeDrafts ? '' : `AND a.status = 'approved'`}
     ORDER BY a.frame_id, a.id DESC`,
    { replacements: { imageIds: images.map((i) => i.id) }, type: QueryTypes.SELECT },
  )
  if (rows.length === 0) return []
  const [frames, annotations] = await Promise.all([
    Frame.findAll({ where: { id: rows.map((r) => r.frameId) } }),
    Annotation.findAll({ where: { id: rows.map((r) => r.annotationId).filter((id): id is number => id != null) }, attributes: ['id', 'version', 'authorId'] }),
  ])
  const userIds = new Set<number>()
  for (const r of rows) for (const id of [r.createdById, r.approvedById]) if (id) userIds.add(id)
  for (const a of annotations) if (a.authorId) userIds.add(a.authorId)
  const users = await User.findAll({ where: { id: [...userIds] }, attributes: ['id', 'name'] })
  const person = (id: number | null | undefined) => {
    const u = users.find((x) => x.id === id)
    return u ? { id: u.id, name: u.name } : null
  }
  const measured = rows.map((r): MeasuredFrame => {
    const frame = frames.find((f) => f.id === r.frameId)!
    const image = images.find((i) => i.id === frame.imageId)!
    const annotation = annotations.find((a) => a.id === r.annotationId)
    return {
      analysisId: r.id,
      status: r.status,
      draft: r.status !== 'approved',
      frame: { id: frame.id, index: frame.index, field: frame.field, fieldUnit: frame.fieldUnit, fieldMT: fieldInMilliTesla(frame.field, frame.fieldUnit), temperatureK: frame.temperatureK },
      image,
      sample: samples.find((s) => s.id === image.sampleId) ?? null,
      measurements: r.measurements,
      recipe: r.recipe,
      engineVersion: r.engineVersion,
      annotationVersion: annotation?.version ?? null,
      // The annotator is whoever drew the mask version; the analysis author is the fallback for masks without one.
      annotator: person(annotation?.authorId ?? r.createdById),
      reviewer: r.status === 'approved' ? person(r.approvedById) : null,
      approvedAt: r.status === 'approved' ? r.approvedAt : null,
    }
  })
  const imageOrder = new Map(images.map((img, i) => [img.id, i]))
  return measured.sort((a, b) => imageOrder.get(a.image.id)! - imageOrder.get(b.image.id)! || a.frame.index - b.frame.index)
}

export interface StackSummaryRow {
  runId: number
  imageId: number
  status: 'done' | 'done-with-errors'
  draft: boolean
  engineVersion: string
  recipe: Record<string, unknown>
  finishedAt: Date | null
  loop: LoopSummary | null
  curie: CurieSummary | null
}

/** The counted stack run of every image that has one (see the file header). */
export async function selectStackSummaries(sequelize: Sequelize, images: Image[], includeDrafts: boolean): Promise<StackSummaryRow[]> {
  if (images.length === 0) return []
  const rows = await sequelize.query<{ id: number; imageId: number; status: 'done' | 'done-with-errors'; engineVersion: string; recipe: Record<string, unknown>; finishedAt: Date | null; summary: { loop?: LoopSummary | null; curie?: CurieSummary | null } | null }>(
    `SELECT DISTINCT ON (image_id) id, image_id AS "imageId", status, engine_version AS "engineVersion", recipe, finished_at AS "finishedAt", summary
     FROM stack_runs WHERE image_id IN (:imageIds) AND status IN (:statuses)
     ORDER BY image_id, id DESC`,
    { replacements: { imageIds: images.map((i) => i.id), statuses: includeDrafts ? ['done', 'done-with-errors'] : ['done'] }, type: QueryTypes.SELECT },
  )
  return rows.map((r) => ({
    runId: r.id,
    imageId: r.imageId,
    status: r.status,
    draft: r.status !== 'done',
    engineVersion: r.engineVersion,
    recipe: r.recipe,
    finishedAt: r.finishedAt,
    loop: r.summary?.loop ?? null,
    curie: r.summary?.curie ?? null,
  }))
}
