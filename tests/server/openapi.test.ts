import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { startTestApp } from './testApp'

/** Express 5 router layers: `route.path` and the methods each route answers. */
function registeredRoutes(router: { stack: { route?: { path: string; methods: Record<string, boolean> } }[] }) {
  const routes: string[] = []
  for (const layer of router.stack) {
    if (!layer.route) continue
    for (const method of Object.keys(layer.route.methods)) routes.push(`${method.toUpperCase()} /api${layer.route.path.replace(/:(\w+)/g, '{$1}')}`)
  }
  return routes
}

describe('GET /api/openapi.json', () => {
  let ctx: ReturnType<typeof startTestApp>
  beforeAll(() => {
    ctx = startTestApp()
  })
  afterAll(() => ctx.stop())

  it('When fetched, then an OpenAPI 3 document with every registered route in it', async () => {
    const res = await request(ctx.app).get('/api/openapi.json')
    expect(res.status).toBe(200)
    expect(res.body.openapi).toMatch(/^3\./)
    const documented = new Set<string>()
    for (const [path, item] of Object.entries(res.body.paths as Record<string, Record<string, unknown>>)) {
      for (const method of Object.keys(item)) documented.add(`${method.toUpperCase()} ${path}`)
    }
    const routes = registeredRoutes(ctx.apiRouter as never).filter((r) => r !== 'GET /api/openapi.json')
    expect(routes.length).toBeGreaterThan(5)
    for (const route of routes) expect(documented, `${route} is not in the OpenAPI document`).toContain(route)
    expect(documented).toContain('POST /api/auth/login')
    expect(documented).toContain('GET /api/health')
  })
})
