/**
 * Test helpers: the app in-process against the real test PostgreSQL, s3rver and SMTP sink, plus people with roles.
 */
import { afterAll, inject } from 'vitest'
import type { Sequelize } from 'sequelize'
import { createSequelize } from '../../server/db'
import request from 'supertest'
import { randomUUID } from 'node:crypto'
import { loadConfig, type AppConfig } from '../../server/config'
import { createApp } from '../../server/app'
import { createDeps } from '../../server/runtime'
import { hashPassword } from '../../server/auth/passwords'
import { defineModels, Lab, Membership, Project, User } from '../../server/models'
import type { LabRole } from '../../shared/auth/permissions'

export const TEST_PASSWORD = 'correct horse battery staple'

export function testConfig(overrides: Partial<AppConfig> = {}): AppConfig {
  return loadConfig({
    databaseUrl: inject('databaseUrl'),
    s3: { endpoint: inject('s3Endpoint'), region: 'us-east-1', bucket: inject('s3Bucket'), accessKeyId: 'S3RVER', secretAccessKey: 'S3RVER', forcePathStyle: true },
    smtpUrl: inject('smtpUrl'),
    mailSinkDir: inject('mailSinkDir'),
    sessionSecret: 'test-session-secret',
    loginRateLimit: { windowMs: 60_000, max: 1000 },
    ...overrides,
  })
}

/** One database connection per test file, shared by every app instance the file starts ("restarts" included). */
let sharedSequelize: Sequelize | undefined
afterAll(async () => {
  await sharedSequelize?.close()
  sharedSequelize = undefined
})

export function startTestApp(overrides: Partial<AppConfig> = {}) {
  const config = testConfig(overrides)
  sharedSequelize ??= createSequelize(config.databaseUrl)
  const deps = createDeps(config, { sequelize: sharedSequelize })
  const built = createApp(deps)
  return {
    ...built,
    deps,
    async stop() {
      await built.close()
      await deps.dispose()
    },
  }
}

/** Point the global models back at the shared connection (after a test bound them to a deliberately dead one). */
export function rebindSharedModels(): void {
  if (sharedSequelize) defineModels(sharedSequelize)
}

let passwordHash: Promise<string> | undefined

/** A lab with one member per role (unique e-mails so test files never collide). */
export async function createLabWithRoles(label = 'Lab') {
  passwordHash ??= hashPassword(TEST_PASSWORD)
  const hash = await passwordHash
  const tag = randomUUID().slice(0, 8)
  const lab = await Lab.create({ name: `${label} ${tag}`, institution: 'Test Institute' })
  const people = {} as Record<LabRole, User>
  for (const role of ['admin', 'pi', 'microscopist', 'annotator', 'reviewer'] as const) {
    const user = await User.create({ email: `${role}.${tag}@test.example`, name: `${role} ${tag}`, passwordHash: hash, lockedUntil: null })
    await Membership.create({ labId: lab.id, userId: user.id, role })
    people[role] = user
  }
  const project = await Project.create({ labId: lab.id, name: `Project ${tag}`, description: '', createdById: people.pi.id, deletedAt: null })
  return { lab, people, project }
}

/** Sign in with a supertest agent; returns the agent and the CSRF token for mutations. */
export async function signIn(app: Parameters<typeof request.agent>[0], email: string, password = TEST_PASSWORD) {
  const agent = request.agent(app)
  const res = await agent.post('/api/auth/login').send({ email, password })
  if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status} ${JSON.stringify(res.body)}`)
  return { agent, csrf: res.body.csrfToken as string, user: res.body }
}
