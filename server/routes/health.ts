import { z } from 'zod'
import { apiRoute, type ApiDefinition } from '../openapi/apiRoute'
import { checkHealth } from '../services/healthService'
import type { AppDeps } from '../app'

const HealthSchema = z.object({ ok: z.boolean(), db: z.enum(['up', 'down']), storage: z.enum(['up', 'down']), mail: z.enum(['up', 'down']) })

export function registerHealthRoutes(api: ApiDefinition, deps: AppDeps): void {
  apiRoute(api, {
    method: 'get',
    path: '/health',
    summary: 'Reachability of the database, object store and mail relay',
    tags: ['health'],
    access: 'public',
    responses: { 200: { description: 'All parts up', schema: HealthSchema }, 503: { description: 'A part is down', schema: HealthSchema } },
    handler: async (_req, res) => {
      const report = await checkHealth(deps)
      res.status(report.ok ? 200 : 503).json(report)
    },
  })
}
