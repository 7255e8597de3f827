/** Projects and samples: list, create and edit, always inside a lab the person belongs to. */
import { fn, col, Op } from 'sequelize'
import type { ProjectDto, SampleDto } from '../../shared/types/lab'
import type { SessionUser } from '../auth/sessionUser'
import { assertLabAction } from '../auth/guards'
import { notFound } from '../errors'
import { Image, Project, Sample } from '../models'
import { recordAudit } from './auditService'

export async function listProjects(user: SessionUser): Promise<ProjectDto[]> {
  const labIds = user.memberships.map((m) => m.labId)
  if (labIds.length === 0) return []
  const projects = await Project.findAll({ where: { labId: { [Op.in]: labIds }, deletedAt: null }, order: [['name', 'ASC']] })
  const ids = projects.map((p) => p.id)
  const [samples, images] = await Promise.all([
    Sample.findAll({ attributes: ['projectId', [fn('COUNT', col('id')), 'n']], where: { projectId: ids }, group: ['projectId'], raw: true }),
    Image.findAll({ attributes: ['projectId', [fn('COUNT', col('id')), 'n']], where: { projectId: ids, deletedAt: null }, group: ['projectId'], raw: true }),
  ])
  const count = (rows: unknown[], id: number) => Number((rows as { projectId: number; n: number }[]).find((r) => r.projectId === id)?.n ?? 0)
  return projects.map((p) => toProjectDto(p, count(samples, p.id), count(images, p.id)))
}

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

export async function listSamples(user: SessionUser, projectId: number): Promise<SampleDto[]> {
  await findProjectFor(user, projectId)
  const samples = await Sample.findAll({ where: { projectId }, order: [['annealTemperatureC', 'ASC'], ['name', 'ASC']] })
  return samples.map(toSampleDto)
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
