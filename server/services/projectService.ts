/** Projects and samples: list, create and edit, always inside a lab the person belongs to. */
import { literal, Op } from 'sequelize'
import type { ProjectDto, SampleDto, SampleSummaryDto } from '../../shared/types/lab'
import type { SessionUser } from '../auth/sessionUser'
import { assertLabAction } from '../auth/guards'
import { notFound } from '../errors'
import { Project, Sample } from '../models'
import { recordAudit } from './auditService'

export async function listProjects(user: SessionUser): Promise<ProjectDto[]> {
  const labIds = user.memberships.map((m) => m.labId)
  if (labIds.length === 0) return []
  // The counts as correlated subqueries: one round trip for a list every page of the app asks for.
  const projects = await Project.findAll({
    attributes: { include: [[literal(SAMPLE_COUNT_SQL), 'sampleCount'], [literal(IMAGE_COUNT_SQL), 'imageCount']] },
    where: { labId: { [Op.in]: labIds }, deletedAt: null },
    order: [['name', 'ASC']],
  })
  return projects.map((p) => toProjectDto(p, Number(p.get('sampleCount')), Number(p.get('imageCount'))))
}

const SAMPLE_COUNT_SQL = '(SELECT count(*) FROM samples AS s WHERE s.project_id = "Project"."id")'
const IMAGE_COUNT_SQL = '(SELECT count(*) FROM images AS i WHERE i.project_id = "Project"."id" AND i.deleted_at IS NULL)'

function toProjectDto(p: Project, sampleCount: number, imageCount: number): ProjectDto {
  return { id: p.id, labId: p.labId, name: p.name, description: p.description, createdAt: p.createdAt.toISOString(), sampleCount, imageCount }
}

/** Load a project the person can see, or 404 (also for other labs' projects). */
export async function findProjectFor(user: SessionUser, projectId: number, action: Parameters<typeof assertLabAction>[2] = 'lab.read'): Promise<Project> {
  const project = await Project.findOne({ where: { id: projectId, deletedAt: null } })
  if (!project) throw notFound('project')
  assertLabAction(user, project.labId, action, 'project')
  return project
}

export async function createProject(user: SessionUser, input: { labId: number; name: string; description?: string }): Promise<ProjectDto> {
  assertLabAction(user, input.labId, 'project.create', 'lab')
  const project = await Project.create({ labId: input.labId, name: input.name, description: input.description ?? '', createdById: user.id, deletedAt: null })
  await recordAudit({ labId: input.labId, actorId: user.id, action: 'project.create', entityType: 'project', entityId: project.id, after: { name: project.name } })
  return toProjectDto(project, 0, 0)
}

export function toSampleDto(s: Sample): SampleDto {
  return {
    id: s.id,
    projectId: s.projectId,
    name: s.name,
    material: s.material,
    thicknessNm: s.thicknessNm,
    substrate: s.substrate,
    annealTemperatureC: s.annealTemperatureC,
    annealDurationMin: s.annealDurationMin,
    annealAtmosphere: s.annealAtmosphere,
    annealFieldMT: s.annealFieldMT,
    notes: s.notes,
  }
}

const SAMPLE_IMAGE_COUNT_SQL = '(SELECT count(*) FROM images AS i WHERE i.sample_id = "Sample"."id" AND i.deleted_at IS NULL)'

export async function listSamples(user: SessionUser, projectId: number): Promise<SampleSummaryDto[]> {
  await findProjectFor(user, projectId)
  const samples = await Sample.findAll({
    attributes: { include: [[literal(SAMPLE_IMAGE_COUNT_SQL), 'imageCount']] },
    where: { projectId },
    order: [['annealTemperatureC', 'ASC'], ['name', 'ASC']],
  })
  return samples.map((s) => ({ ...toSampleDto(s), imageCount: Number(s.get('imageCount')) }))
}

export type SampleInput = Omit<SampleDto, 'id' | 'projectId'>

export async function createSample(user: SessionUser, projectId: number, input: SampleInput): Promise<SampleDto> {
  const project = await findProjectFor(user, projectId, 'sample.edit')
  const sample = await Sample.create({ projectId, ...input })
  await recordAudit({ labId: project.labId, actorId: user.id, action: 'sample.create', entityType: 'sample', entityId: sample.id, after: toSampleDto(sample) })
  return toSampleDto(sample)
}

export async function updateSample(user: SessionUser, sampleId: number, input: Partial<SampleInput>): Promise<SampleDto> {
  const sample = await Sample.findByPk(sampleId)
  if (!sample) throw notFound('sample')
  const project = await findProjectFor(user, sample.projectId, 'lab.read').catch(() => {
    throw notFound('sample')
  })
  assertLabAction(user, project.labId, 'sample.edit', 'sample')
  const before = toSampleDto(sample)
  await sample.update(input)
  await recordAudit({ labId: project.labId, actorId: user.id, action: 'sample.update', entityType: 'sample', entityId: sample.id, before, after: toSampleDto(sample) })
  return toSampleDto(sample)
}
