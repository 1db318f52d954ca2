import { Router, type RequestHandler } from 'express'
import { rateLimit } from 'express-rate-limit'
import type { AppPassport } from '../auth/passport'
import { passwordChangeSchema, sessionQuerySchema, signInSchema } from '@shared/schemas/auth'
import type { SessionUser } from '@shared/types/api'
import type { Config } from '../config'
import { AppError } from '../errors/app-error'
import { currentUser, requireAuth } from '../middleware/auth'
import { validate } from '../middleware/validate'
import type { PostgresRateLimitStore } from '../middleware/pg-rate-limit-store'
import type { UserService } from '../services/user.service'

interface Deps {
  config: Config
  passport: AppPassport
  users: UserService
  rateLimitStore: PostgresRateLimitStore
}

/** `/api/session` (sign in, who am I, sign out) and `/api/account/password`. */
export function sessionRoutes({ config, passport, users, rateLimitStore }: Deps): Router {
  const router = Router()

  const signInLimit = rateLimit({
    windowMs: config.LOGIN_RATE_WINDOW_MINUTES * 60_000,
    limit: config.LOGIN_RATE_LIMIT,
    skipSuccessfulRequests: true,
    standardHeaders: 'draft-7',
    legacyHeaders: false,
    store: rateLimitStore,
    handler: (req, res, _next, options) => {
      const resetTime = (req as typeof req & { rateLimit?: { resetTime?: Date } }).rateLimit?.resetTime
      const seconds = resetTime ? Math.max(1, Math.ceil((resetTime.getTime() - Date.now()) / 1000)) : Math.ceil(options.windowMs / 1000)
      const minutes = Math.ceil(seconds / 60)
      res
        .status(429)
        .set('Retry-After', String(seconds))
        .json({
          error: {
            code: 'too_many_attempts',
            message: `Too many failed sign-in attempts from this address. Try again in ${minutes} minute${minutes === 1 ? '' : 's'}.`,
            retryAfterSeconds: seconds,
          },
        })
    },
  })

  const signIn: RequestHandler = (req, res, next) => {
    passport.authenticate('local', (err: unknown, user: SessionUser | false, info?: AppError) => {
      if (err) return next(err)
      if (!user) return next(info instanceof AppError ? info : new AppError('invalid_credentials', 'Email or password is incorrect', 401))
      // passport 0.7 regenerates the session id on login (session fixation defence).
      req.login(user, (loginErr) => (loginErr ? next(loginErr) : res.status(200).json({ user })))
    })(req, res, next)
  }

  router.post('/session', signInLimit, validate({ body: signInSchema }), signIn)

  router.get('/session', validate({ query: sessionQuerySchema }), (req, res) => {
    if (!req.user) throw AppError.unauthenticated()
    res.json({ user: req.user })
  })

  router.delete('/session', (req, res, next) => {
    req.logout((err) => {
      if (err) return next(err)
      req.session.destroy((destroyErr) => {
        if (destroyErr) return next(destroyErr)
        res.clearCookie(SESSION_COOKIE, { path: '/' })
        res.status(204).end()
      })
    })
  })

  router.put('/account/password', requireAuth, validate({ body: passwordChangeSchema }), async (req, res) => {
    const user = currentUser(req)
    await users.changePassword(user.id, req.body.currentPassword, req.body.newPassword, { id: user.id, ip: req.ip }, req.sessionID)
    res.status(204).end()
  })

  return router
}

export const SESSION_COOKIE = 'startproof.sid'
