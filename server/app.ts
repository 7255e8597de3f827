/**
 * Builds the Express app: security headers, body parsing, sessions, passport, CSRF, the API routes, the OpenAPI
 * document, the built client with its SPA fallback, then the 404 and error handlers — in that order.
 * server/index.ts is the only file that calls listen().
 */
import express, { type NextFunction, type Request, type Response } from 'express'
import helmet from 'helmet'
import { existsSync } from 'node:fs'
import { fileURLToPath } from 'node:url'
import path from 'node:path'
import type { Sequelize } from 'sequelize'
import type { AppConfig } from './config'
import { AppError } from './errors'
import type { ObjectStore } from './storage/objectStore'
import type { Mailer } from './mail/mailer'
import { createSessionMiddleware } from './auth/session'
import { configurePassport } from './auth/passport'
import { csrfProtection } from './auth/csrf'
import { installRequestLimits } from './http/requestLimits'
import { openUploadTempFolder } from './http/uploadTempFolder'
import { createApiDefinition, openApiDocument } from './openapi/apiRoute'
import { registerHealthRoutes } from './routes/health'
import { registerAuthRoutes } from './routes/auth'
import { registerLabRoutes } from './routes/labs'
import { registerProjectRoutes } from './routes/projects'
import { registerDevRoutes } from './routes/dev'
import { registerImageRoutes } from './routes/images'
import { createImageService } from './services/imageService'
import { registerAnnotationRoutes } from './routes/annotations'
import { createAnnotationService } from './services/annotationService'
import type { MaskMeasurer } from './analysis/maskMeasurer'
import type { LazyAnalysisPool } from './analysis/lazyAnalysisPool'
import type { JobQueue } from './jobs/jobQueue'
import { registerStackRunRoutes } from './routes/stackRuns'
import { createStackRunService } from './services/stackRunService'
import { createBearerAuthentication, isBearerRequest } from './auth/bearer'
import { createApiTokenService } from './services/apiTokenService'
import { registerApiTokenRoutes } from './routes/apiTokens'
import { createInvitationService } from './services/invitationService'
import { registerInvitationRoutes } from './routes/invitations'
import { createPasswordResetService } from './services/passwordResetService'
import { registerPasswordResetRoutes } from './routes/passwordResets'
import { createReviewService } from './services/reviewService'
import { registerReviewRoutes } from './routes/reviews'
import { createComparisonService } from './services/comparisonService'
import { registerComparisonRoutes } from './routes/comparisons'
import { createExportService } from './services/exportService'
import { registerExportRoutes } from './routes/exports'
import { registerLabMaterialRoutes } from './routes/labMaterials'
import { registerSampleMeasurementRoutes } from './routes/sampleMeasurements'
import { registerMotionRoutes } from './routes/motion'
import { createMotionService } from './services/motionService'
import { registerDeletionRoutes } from './routes/deletion'
import { createDeletionService } from './services/deletionService'

export interface AppDeps {
  config: AppConfig
  sequelize: Sequelize
  store: ObjectStore
  mailer: Mailer
  measurer: MaskMeasurer
  /** The web server's worker threads (mask measurements, upload previews). */
  analysisPool: LazyAnalysisPool
  jobs: JobQueue
}

const DIST_DIR = fileURLToPath(new URL('../dist', import.meta.url))

export function createApp(deps: AppDeps) {
  const { config } = deps
  const app = express()
  app.disable('x-powered-by')
  if (config.secureCookies) app.set('trust proxy', 1)

  const storageOrigin = deps.config.s3.endpoint ? new URL(deps.config.s3.endpoint).origin : ''
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          'img-src': ["'self'", 'data:', 'blob:', ...(storageOrigin ? [storageOrigin] : [])],
          'connect-src': ["'self'", ...(storageOrigin ? [storageOrigin] : [])],
          'worker-src': ["'self'", 'blob:'],
          'upgrade-insecure-requests': config.secureCookies ? [] : null,
        },
      },
      strictTransportSecurity: config.secureCookies,
    }),
  )
  installRequestLimits(app)
  app.use('/api', express.json({ limit: '2mb' }))

  const sessions = createSessionMiddleware(config)
  const passport = configurePassport()
  const apiTokens = createApiTokenService()
  // Health and the API description must answer even when the session store (the database) is down.
  const sessionless = new Set(['/health', '/openapi.json'])
  // A request with an API token (Authorization: Bearer rmn_…) is authenticated by the token alone: no session.
  const bearer = createBearerAuthentication(apiTokens)
  app.use('/api', (req, res, next) => (sessionless.has(req.path) ? next() : bearer(req, res, next)))
  for (const middleware of [sessions.middleware, passport.session()]) {
    app.use('/api', (req, res, next) => (sessionless.has(req.path) || isBearerRequest(req) ? next() : middleware(req, res, next)))
  }
  app.use('/api', (req, res, next) => (sessionless.has(req.path) ? next() : csrfProtection(req, res, next)))

  const api = createApiDefinition(express.Router())
  registerHealthRoutes(api, deps)
  const passwordResets = createPasswordResetService(deps)
  registerAuthRoutes(api, deps, passport, { accountLocked: (email) => passwordResets.sendUnlockLink(email) })
  registerPasswordResetRoutes(api, passwordResets, config)
  registerApiTokenRoutes(api, apiTokens)
  registerInvitationRoutes(api, createInvitationService(deps))
  registerLabRoutes(api)
  registerProjectRoutes(api)
  const images = createImageService(deps)
  const uploadFolder = openUploadTempFolder(config.uploadTmpDir)
  registerImageRoutes(api, images, { maxBytes: config.maxUploadBytes, folder: uploadFolder })
  registerStackRunRoutes(api, createStackRunService({ ...deps, images }), deps.store)
  const annotations = createAnnotationService(deps)
  registerAnnotationRoutes(api, annotations)
  registerReviewRoutes(api, createReviewService(deps))
  const motion = createMotionService({ ...deps, images })
  registerComparisonRoutes(api, createComparisonService({ ...deps, motion }))
  registerExportRoutes(api, createExportService({ ...deps, annotations }))
  registerLabMaterialRoutes(api)
  registerSampleMeasurementRoutes(api, deps.sequelize)
  registerMotionRoutes(api, motion)
  registerDeletionRoutes(api, createDeletionService(deps))
  if (config.mailSinkDir) registerDevRoutes(api, config.mailSinkDir)
  const document = openApiDocument(api.registry)
  api.router.get('/openapi.json', (_req, res) => res.json(document))
  app.use('/api', api.router)
  app.use('/api', (req, _res, next) => next(new AppError(404, 'route-not-found', `No API route ${req.method} ${req.originalUrl}.`)))

  if (existsSync(DIST_DIR)) {
    app.use(express.static(DIST_DIR, { index: false, maxAge: '1h' }))
    app.get('/{*splat}', (_req, res) => res.sendFile(path.join(DIST_DIR, 'index.html')))
  }

  app.use(errorHandler)
  const close = async () => {
    uploadFolder.close()
    await sessions.close()
    await motion.close()
  }
  return { app, apiRouter: api.router, openApi: document, uploadFolder, close }
}

/** Turns errors into `{ error: { code, message } }`. Database outages become 503 with a clear message. */
function errorHandler(err: unknown, req: Request, res: Response, next: NextFunction): void {
  void next
  if (res.headersSent) return
  if (err instanceof AppError) {
    res.status(err.status).json({ error: { code: err.code, message: err.message, ...err.extra } })
    return
  }
  const e = err as { type?: string; status?: number; name?: string; message?: string; code?: string }
  if (e.type === 'entity.too.large') {
    res.status(413).json({ error: { code: 'body-too-large', message: 'The request body is too large.' } })
    return
  }
  if (e.type === 'entity.parse.failed') {
    res.status(400).json({ error: { code: 'invalid-json', message: 'The request body is not valid JSON.' } })
    return
  }
  if (isDatabaseOutage(e)) {
    res.status(503).json({ error: { code: 'db-unavailable', message: 'The database is not reachable right now; try again in a moment.' } })
    return
  }
  console.error(`[${new Date().toISOString()}] ${req.method} ${req.originalUrl}`, err)
  res.status(500).json({ error: { code: 'internal-error', message: 'Something went wrong on the server. It has been logged.' } })
}

function isDatabaseOutage(e: { name?: string; code?: string; message?: string }): boolean {
  return (
    ['SequelizeConnectionError', 'SequelizeConnectionRefusedError', 'SequelizeConnectionAcquireTimeoutError', 'SequelizeHostNotReachableError'].includes(e.name ?? '') ||
    ['ECONNREFUSED', '57P01', '57P03', 'ECONNRESET'].includes(e.code ?? '') ||
    /Connection terminated|connect ECONNREFUSED|the database system is (shutting down|starting up)/.test(e.message ?? '')
  )
}
