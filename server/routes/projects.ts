import { z } from 'zod'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser } from '../auth/guards'
import { createProject, createSample, listProjects, listSamples, updateSample } from '../services/projectService'

const ProjectSchema = z.object({
  id: z.number().int(),
  labId: z.number().int(),
  name: z.string(),
  description: z.string(),
  createdAt: z.string(),
  sampleCount: z.number().int(),
  imageCount: z.number().int(),
})
const SampleFields = {
  name: z.string().trim().min(1).max(200),
  material: z.string().max(200).default(''),
  thicknessNm: z.number().positive().max(1e7).nullable().default(null),
  substrate: z.string().max(200).default(''),
  annealTemperatureC: z.number().min(-273.15).max(3000).nullable().default(null),
  annealDurationMin: z.number().min(0).max(1e6).nullable().default(null),
  annealAtmosphere: z.string().max(100).default(''),
  annealFieldMT: z.number().min(-1e5).max(1e5).nullable().default(null),
  notes: z.string().max(10_000).default(''),
}
const SampleInputSchema = z.object(SampleFields)
/** PATCH: only the fields sent change (no defaults filled in). */
const SamplePatchSchema = z.object({
  name: SampleFields.name,
  material: z.string().max(200),
  thicknessNm: z.number().positive().max(1e7).nullable(),
  substrate: z.string().max(200),
  annealTemperatureC: z.number().min(-273.15).max(3000).nullable(),
  annealDurationMin: z.number().min(0).max(1e6).nullable(),
  annealAtmosphere: z.string().max(100),
  annealFieldMT: z.number().min(-1e5).max(1e5).nullable(),
  notes: z.string().max(10_000),
}).partial()
const SampleSchema = SampleInputSchema.extend({ id: z.number().int(), projectId: z.number().int() })
const SampleSummarySchema = SampleSchema.extend({ imageCount: z.number().int() })
const idParam = (name: string) => z.object({ [name]: z.coerce.number().int().positive() })

export function registerProjectRoutes(api: ApiDefinition): void {
  apiRoute(api, {
    method: 'get',
    path: '/projects',
    summary: "Projects of the signed-in person's labs",
    tags: ['projects'],
    access: 'signed-in',
    responses: { 200: { description: 'Projects', schema: z.array(ProjectSchema) } },
    handler: (req) => listProjects(currentUser(req)),
  })
  apiRoute(api, {
    method: 'post',
    path: '/projects',
    summary: 'Create a project in a lab',
    tags: ['projects'],
    access: 'signed-in',
    body: z.object({ labId: z.number().int().positive(), name: z.string().trim().min(1).max(200), description: z.string().max(10_000).optional() }),
    responses: { 201: { description: 'Created', schema: ProjectSchema }, 403: { description: 'Role may not create projects' } },
    handler: async (req, res, { body }) => res.status(201).json(await createProject(currentUser(req), body)),
  })
  apiRoute(api, {
    method: 'get',
    path: '/projects/:projectId/samples',
    summary: 'Samples of a project, by anneal temperature',
    tags: ['samples'],
    access: 'signed-in',
    params: idParam('projectId'),
    responses: { 200: { description: 'Samples, each with its number of images', schema: z.array(SampleSummarySchema) }, 404: { description: 'No such project' } },
    handler: (req, _res, { params }) => listSamples(currentUser(req), params.projectId as number),
  })
  apiRoute(api, {
    method: 'post',
    path: '/projects/:projectId/samples',
    summary: 'Add a sample with its anneal conditions',
    tags: ['samples'],
    access: 'signed-in',
    params: idParam('projectId'),
    body: SampleInputSchema,
    responses: { 201: { description: 'Created', schema: SampleSchema }, 403: { description: 'Role may not edit samples' }, 404: { description: 'No such project' } },
    handler: async (req, res, { params, body }) => res.status(201).json(await createSample(currentUser(req), params.projectId as number, body)),
  })
  apiRoute(api, {
    method: 'patch',
    path: '/samples/:sampleId',
    summary: 'Edit a sample (audited)',
    tags: ['samples'],
    access: 'signed-in',
    params: idParam('sampleId'),
    body: SamplePatchSchema,
    responses: { 200: { description: 'Updated', schema: SampleSchema }, 403: { description: 'Role may not edit samples' }, 404: { description: 'No such sample' } },
    handler: (req, _res, { params, body }) => updateSample(currentUser(req), params.sampleId as number, body),
  })
}
