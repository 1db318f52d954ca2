import type { NextFunction, Request, RequestHandler, Response } from 'express'
import type { Role } from '@shared/types/roles'
import type { SessionUser } from '@shared/types/api'
import { AppError } from '../errors/app-error'
import type { ProjectService } from '../services/project.service'

declare global {
  // eslint-disable-next-line @typescript-eslint/no-namespace
  namespace Express {
    // passport's req.user is this shape everywhere in the app
    // eslint-disable-next-line @typescript-eslint/no-empty-object-type
    interface User extends SessionUser {}
  }
}

/** The signed-in user, or a 401. Use after `requireAuth` for a typed user. */
export function currentUser(req: Request): SessionUser {
  if (!req.user) throw AppError.unauthenticated()
  return req.user
}

export const requireAuth: RequestHandler = (req, _res, next) => {
  if (!req.isAuthenticated?.() || !req.user) return next(AppError.unauthenticated())
  next()
}

/** Allows only the listed roles; everyone else gets 403. */
export function requireRole(...roles: Role[]): RequestHandler {
  return (req, _res, next) => {
    if (!req.user) return next(AppError.unauthenticated())
    if (!roles.includes(req.user.role)) return next(AppError.forbidden('Your role does not allow this'))
    next()
  }
}

/**
 * Allows only members of the project named by `req.params[param]` (admins of the owning firm too).
 * A project the user may not see answers 404, so its existence is not revealed.
 */
export function requireProjectAccess(projects: ProjectService, param = 'projectId'): RequestHandler {
  return async (req: Request, _res: Response, next: NextFunction) => {
    const user = req.user
    if (!user) return next(AppError.unauthenticated())
    const projectId = String(req.params[param] ?? '')
    if (!(await projects.canAccess(user, projectId))) return next(AppError.notFound('Project'))
    next()
  }
}
