/**
 * One way to declare an API route: `apiRoute(api, spec)` registers the Express handler *and* its OpenAPI 3 entry from
 * the same zod schemas, validates params/query/body before the handler runs, and answers 400 with field messages when
 * they do not parse. tests/server/openapi.test.ts checks that every registered route is documented.
 */
import type { NextFunction, Request, RequestHandler, Response, Router } from 'express'
import { OpenAPIRegistry, OpenApiGeneratorV3 } from '@asteasolutions/zod-to-openapi'
import { z, type ZodType } from 'zod'
import { AppError } from '../errors'
import { requireSignedIn } from '../auth/guards'

type Method = 'get' | 'post' | 'put' | 'patch' | 'delete'

export interface RouteSpec<P extends ZodType, Q extends ZodType, B extends ZodType> {
  method: Method
  /** Express path below /api, e.g. `/projects/:projectId`. */
  path: string
  summary: string
  tags: string[]
  /** 'public' routes need no session; all others answer 401 without one. */
  access: 'public' | 'signed-in'
  params?: P
  query?: Q
  body?: B
  /** Non-JSON request bodies (multipart uploads) are described here and parsed by `before` middleware. */
  requestContentType?: string
  before?: RequestHandler[]
  responses: Record<number, { description: string; schema?: ZodType; contentType?: string }>
  handler: (req: Request, res: Response, input: { params: z.infer<P>; query: z.infer<Q>; body: z.infer<B> }) => Promise<unknown> | unknown
}

export interface ApiDefinition {
  router: Router
  registry: OpenAPIRegistry
}

const ERROR_SCHEMA = z.object({ error: z.object({ code: z.string(), message: z.string(), file: z.string().optional() }) })

function parseOr400<T>(schema: ZodType<T> | undefined, value: unknown, where: string): T {
  if (!schema) return value as T
  const result = schema.safeParse(value)
  if (result.success) return result.data
  const flat = z.flattenError(result.error)
  const fields = flat.fieldErrors as Record<string, string[]>
  const first = Object.entries(fields)[0]
  const message = first ? `${first[0]}: ${first[1][0]}` : (flat.formErrors[0] ?? 'invalid input')
  throw new AppError(400, 'invalid-input', `Invalid ${where} — ${message}`, { fields })
}

export function apiRoute<P extends ZodType = ZodType, Q extends ZodType = ZodType, B extends ZodType = ZodType>(api: ApiDefinition, spec: RouteSpec<P, Q, B>): void {
  const openApiPath = '/api' + spec.path.replace(/:(\w+)/g, '{$1}')
  const responses: Record<string, unknown> = {}
  for (const [status, r] of Object.entries(spec.responses)) {
    responses[status] = r.schema ? { description: r.description, content: { [r.contentType ?? 'application/json']: { schema: r.schema } } } : { description: r.description }
  }
  if (spec.access !== 'public') responses['401'] ??= { description: 'Not signed in', content: { 'application/json': { schema: ERROR_SCHEMA } } }
  responses['400'] ??= { description: 'Invalid input', content: { 'application/json': { schema: ERROR_SCHEMA } } }
  api.registry.registerPath({
    method: spec.method,
    path: openApiPath,
    summary: spec.summary,
    tags: spec.tags,
    security: spec.access === 'public' ? [] : [{ session: [] }, { bearer: [] }],
    request: {
      params: spec.params as never,
      query: spec.query as never,
      body: spec.body
        ? { content: { 'application/json': { schema: spec.body } } }
        : spec.requestContentType
          ? { content: { [spec.requestContentType]: { schema: z.object({}) } } }
          : undefined,
    },
    responses: responses as never,
  })

  const handler = async (req: Request, res: Response, next: NextFunction) => {
    try {
      const input = {
        params: parseOr400(spec.params, req.params, 'path'),
        query: parseOr400(spec.query, req.query, 'query'),
        body: parseOr400(spec.body, req.body ?? {}, 'body'),
      }
      const result = await spec.handler(req, res, input as never)
      // A handler that answered itself may return the response (`res.status(201).json(…)`): never serialise that.
      if (!res.headersSent && result !== undefined && result !== res) res.json(result)
    } catch (err) {
      next(err)
    }
  }
  const chain: RequestHandler[] = [...(spec.access === 'public' ? [] : [requireSignedIn]), ...(spec.before ?? []), handler]
  api.router[spec.method](spec.path, ...chain)
}

export function createApiDefinition(router: Router): ApiDefinition {
  const registry = new OpenAPIRegistry()
  registry.registerComponent('securitySchemes', 'session', { type: 'apiKey', in: 'cookie', name: 'remanence.sid' })
  registry.registerComponent('securitySchemes', 'bearer', { type: 'http', scheme: 'bearer' })
  return { router, registry }
}

export function openApiDocument(registry: OpenAPIRegistry): object {
  return new OpenApiGeneratorV3(registry.definitions).generateDocument({
    openapi: '3.0.3',
    info: {
      title: 'Remanence API',
      version: '0.1.0',
      description:
        'Magnetic-domain image analysis for labs. Cookie sessions: sign in with POST /api/auth/login, keep the cookie, ' +
        'and send the returned csrfToken as the X-CSRF-Token header on every POST/PUT/PATCH/DELETE.',
    },
    servers: [{ url: '/' }],
  })
}
