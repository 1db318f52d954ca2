import express, { type Express } from 'express'
import session from 'express-session'
import connectPgSimple from 'connect-pg-simple'
import helmet from 'helmet'
import type { Pool } from 'pg'
import type { DataSource } from 'typeorm'
import type { Config } from './config'
import { createPassport } from './auth/passport'
import { sessionWithUser } from './auth/session-user'
import { errorHandler, notFoundHandler } from './errors/error-handler'
import { requireAuth } from './middleware/auth'
import { serveClient } from './middleware/client-assets'
import { PostgresRateLimitStore } from './middleware/pg-rate-limit-store'
import { equipmentRoutes } from './routes/equipment.routes'
import { projectRoutes } from './routes/project.routes'
import { outboxRoutes } from './routes/outbox.routes'
import { verifyRoutes } from './routes/verify.routes'
import { archiveRoutes, projectPackageRoutes } from './routes/archive.routes'
import { closeoutRoutes } from './routes/closeout.routes'
import { runRoutes } from './routes/run.routes'
import { templateRoutes } from './routes/template.routes'
import { SESSION_COOKIE, sessionRoutes } from './routes/session.routes'
import { userRoutes } from './routes/user.routes'
import { createAppServices, type AppServices } from './services'
import { throttleTouch } from './middleware/session-touch'
import { compressJson } from './middleware/compress-json'

export interface AppDeps {
  config: Config
  db: DataSource
  /** Built from the configuration when not given (index.ts and the tests pass the ones they also start or inspect). */
  services?: AppServices
  /**
   * The session store's own pool (server/index.ts makes one of SESSION_POOL_SIZE), so signing in and the once-a-minute
   * touch never wait behind request transactions for the last connection; tests leave it out and share the app's pool.
   */
  sessionPool?: Pool
}

/** Builds the Express app from its services: middleware, routes, client, errors. No listening and no connecting here. */
export function createApp({ config, db, services = createAppServices(config, db), sessionPool }: AppDeps): Express {
  const app = express()
  app.disable('x-powered-by')
  app.set('trust proxy', config.TRUST_PROXY === 'false' ? false : config.TRUST_PROXY)

  const { users, projects, templates, equipment, runs, findings, signing, reports, archive, closeout, packages, verify } = services
  const equipmentRouters = equipmentRoutes(config, equipment, projects)
  const runRouters = runRoutes(config, runs, findings, signing, reports)
  const closeoutRouters = closeoutRoutes(config, closeout, projects)
  const passport = createPassport(users)
  const PgStore = connectPgSimple(session)
  // Without a pool of their own, the sessions share TypeORM's pg pool (it reconnects by itself after an outage).
  const pool = sessionPool ?? (db.driver as unknown as { master: Pool }).master

  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          'img-src': ["'self'", 'data:', 'blob:'],
          'font-src': ["'self'", 'data:'],
          'style-src': ["'self'", "'unsafe-inline'"],
          'upgrade-insecure-requests': config.COOKIE_SECURE ? [] : null,
        },
      },
    }),
  )

  const api = express.Router()
  api.use(express.json({ limit: '1mb' }))
  api.get('/health', async (_req, res) => {
    await db.query('SELECT 1')
    res.json({ status: 'ok', database: 'up' })
  })
  const sessionStore = throttleTouch(new PgStore({ pool, tableName: 'session', createTableIfMissing: false, pruneSessionInterval: 15 * 60 }))
  api.use(
    sessionWithUser(
      sessionStore,
      pool,
      session({
        name: SESSION_COOKIE,
        store: sessionStore,
        secret: config.SESSION_SECRET!,
        resave: false,
        saveUninitialized: false,
        // The cookie slides on every answer; the stored expiry is written at most once a minute (throttleTouch).
        rolling: true,
        cookie: {
          httpOnly: true,
          sameSite: 'lax',
          secure: config.COOKIE_SECURE,
          maxAge: config.SESSION_MAX_AGE_HOURS * 3600_000,
          path: '/',
        },
      }),
    ),
  )
  api.use(passport.initialize())
  api.use(passport.session())
  api.use(sessionRoutes({ config, passport, users, rateLimitStore: new PostgresRateLimitStore(db) }))
  api.use('/verify', verifyRoutes(verify, new PostgresRateLimitStore(db, 'verify:')))
  api.use('/users', requireAuth, userRoutes(users))
  api.use('/projects/:projectId/equipment', requireAuth, equipmentRouters.byProject)
  api.use('/projects/:projectId/closeout-documents', requireAuth, closeoutRouters.byProject)
  api.use('/projects/:projectId/handover.zip', requireAuth, projectPackageRoutes(packages, projects))
  api.use('/projects', requireAuth, projectRoutes(projects, { publicUrl: config.PUBLIC_URL }))
  api.use('/closeout-documents', requireAuth, closeoutRouters.byId)
  api.use('/equipment/:equipmentId/runs', requireAuth, runRouters.byEquipment)
  api.use('/equipment', requireAuth, equipmentRouters.byId)
  api.use('/runs', requireAuth, runRouters.byId)
  api.use('/outbox', requireAuth, outboxRoutes(db))
  api.use('/archive', requireAuth, archiveRoutes(archive, packages))
  api.use('/templates', requireAuth, templateRoutes(templates))
  api.use(notFoundHandler)
  api.use(errorHandler)
  app.use('/api', compressJson(), api)

  serveClient(app, config.CLIENT_DIST)
  app.use(errorHandler)
  return app
}
