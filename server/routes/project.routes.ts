import { Router } from 'express'
import * as yup from 'yup'
import { uuidSchema } from '@shared/schemas/user'
import { currentUser, requireProjectAccess } from '../middleware/auth'
import { validate } from '../middleware/validate'
import type { ProjectService } from '../services/project.service'

const projectParams = yup.object({ projectId: uuidSchema.label('projectId') })

/** `/api/projects`: the projects a person may see, and one project with its members. */
export function projectRoutes(projects: ProjectService): Router {
  const router = Router()

  router.get('/', async (req, res) => {
    res.json({ projects: await projects.listFor(currentUser(req)) })
  })

  router.get('/:projectId', validate({ params: projectParams }), requireProjectAccess(projects), async (req, res) => {
    res.json({ project: await projects.get(String(req.params.projectId)) })
  })

  router.get('/:projectId/members', validate({ params: projectParams }), requireProjectAccess(projects), async (req, res) => {
    res.json({ members: await projects.members(String(req.params.projectId)) })
  })

  return router
}
