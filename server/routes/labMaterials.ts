import { z } from 'zod'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { currentUser } from '../auth/guards'
import { createLabMaterial, deleteLabMaterial, listLabMaterials, updateLabMaterial } from '../services/labMaterialService'

/** SI constants; generous ranges that still catch a value typed in the wrong unit (e.g. A in pJ/m as 21). */
const MaterialFields = {
  name: z.string().trim().min(1).max(200),
  msAPerM: z.number().positive().max(1e8),
  aJPerM: z.number().positive().max(1e-9),
  kJPerM3: z.number().min(-1e9).max(1e9),
  tcK: z.number().positive().max(1e4).nullable(),
  source: z.string().trim().max(2000),
}
const MaterialInputSchema = z.object({ ...MaterialFields, tcK: MaterialFields.tcK.default(null), source: MaterialFields.source.default('') })
const MaterialPatchSchema = z.object(MaterialFields).partial()
const MaterialSchema = z.object({ ...MaterialFields, id: z.number().int(), labId: z.number().int(), createdAt: z.string(), updatedAt: z.string() })
const labParams = z.object({ labId: z.coerce.number().int().positive() })
const materialParams = labParams.extend({ id: z.coerce.number().int().positive() })

/** A lab's own material constants (read: 'lab.read'; write: 'sample.edit', see services/labMaterialService.ts). */
export function registerLabMaterialRoutes(api: ApiDefinition): void {
  apiRoute(api, {
    method: 'get',
    path: '/labs/:labId/materials',
    summary: "The lab's own material constants (Ms, A, K, Tc in SI, with their source), by name",
    tags: ['labs', 'theory'],
    access: 'signed-in',
    params: labParams,
    responses: { 200: { description: 'Materials', schema: z.array(MaterialSchema) }, 404: { description: 'No such lab' } },
    handler: (req, _res, { params }) => listLabMaterials(currentUser(req), params.labId),
  })
  apiRoute(api, {
    method: 'post',
    path: '/labs/:labId/materials',
    summary: 'Add a material to the lab table (audited)',
    tags: ['labs', 'theory'],
    access: 'signed-in',
    params: labParams,
    body: MaterialInputSchema,
    responses: {
      201: { description: 'Created', schema: MaterialSchema },
      403: { description: 'Role may not edit samples' },
      404: { description: 'No such lab' },
      409: { description: 'A material of this name exists in the lab' },
    },
    handler: async (req, res, { params, body }) => res.status(201).json(await createLabMaterial(currentUser(req), params.labId, body)),
  })
  apiRoute(api, {
    method: 'patch',
    path: '/labs/:labId/materials/:id',
    summary: 'Edit a material of the lab table (audited)',
    tags: ['labs', 'theory'],
    access: 'signed-in',
    params: materialParams,
    body: MaterialPatchSchema,
    responses: {
      200: { description: 'Updated', schema: MaterialSchema },
      403: { description: 'Role may not edit samples' },
      404: { description: 'No such lab or material' },
      409: { description: 'A material of this name exists in the lab' },
    },
    handler: (req, _res, { params, body }) => updateLabMaterial(currentUser(req), params.labId, params.id, body),
  })
  apiRoute(api, {
    method: 'delete',
    path: '/labs/:labId/materials/:id',
    summary: 'Remove a material from the lab table (audited)',
    tags: ['labs', 'theory'],
    access: 'signed-in',
    params: materialParams,
    responses: { 204: { description: 'Removed' }, 403: { description: 'Role may not edit samples' }, 404: { description: 'No such lab or material' } },
    handler: async (req, res, { params }) => {
      await deleteLabMaterial(currentUser(req), params.labId, params.id)
      res.status(204).end()
    },
  })
}
