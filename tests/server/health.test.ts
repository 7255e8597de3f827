import { afterAll, beforeAll, describe, expect, it } from 'vitest'
import request from 'supertest'
import { rebindSharedModels, startTestApp } from './testApp'

describe('GET /api/health', () => {
  let ctx: ReturnType<typeof startTestApp>
  beforeAll(() => {
    ctx = startTestApp()
  })
  afterAll(() => ctx.stop())

  it('When every dependency answers, then 200 with db, storage and mail up', async () => {
    const res = await request(ctx.app).get('/api/health')
    expect(res.status).toBe(200)
    expect(res.body).toEqual({ ok: true, db: 'up', storage: 'up', mail: 'up' })
  })

  it('When the object store is unreachable, then 503 naming storage as down', async () => {
    const broken = startTestApp({ s3: { ...ctx.deps.config.s3, endpoint: 'http://127.0.0.1:9' } })
    try {
      const res = await request(broken.app).get('/api/health')
      expect(res.status).toBe(503)
      expect(res.body).toEqual({ ok: false, db: 'up', storage: 'down', mail: 'up' })
    } finally {
      await broken.stop()
    }
  })

  it('When the mail relay is unreachable, then 503 naming mail as down', async () => {
    const broken = startTestApp({ smtpUrl: 'smtp://127.0.0.1:9' })
    try {
      const res = await request(broken.app).get('/api/health')
      expect(res.status).toBe(503)
      expect(res.body).toMatchObject({ ok: false, mail: 'down', db: 'up' })
    } finally {
      await broken.stop()
    }
  })

  it('When the database is unreachable, then 503 naming db as down, and signed-in routes answer 503 db-unavailable', async () => {
    const url = new URL(ctx.deps.config.databaseUrl)
    url.port = '9'
    const { createSequelize } = await import('../../server/db')
    const { createApp } = await import('../../server/app')
    const { createDeps } = await import('../../server/runtime')
    const config = { ...ctx.deps.config, databaseUrl: url.toString() }
    const deadSequelize = createSequelize(config.databaseUrl)
    const deps = createDeps(config, { sequelize: deadSequelize })
    const broken = createApp(deps)
    try {
      const res = await request(broken.app).get('/api/health')
      expect(res.status).toBe(503)
      expect(res.body).toMatchObject({ ok: false, db: 'down', storage: 'up' })
      const login = await request(broken.app).post('/api/auth/login').send({ email: 'someone@test.example', password: 'whatever password' })
      expect(login.status).toBe(503)
      expect(login.body.error.code).toBe('db-unavailable')
    } finally {
      await broken.close()
      await deps.dispose()
      await deadSequelize.close()
      rebindSharedModels()
    }
  })
})
