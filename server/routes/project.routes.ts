import { Router } from 'express'
import * as yup from 'yup'
import { projectCreateSchema, projectUpdateSchema } from '@shared/schemas/project'
import { uuidSchema } from '@shared/schemas/user'
import { currentUser, requireProjectAccess, requireRole } from '../middleware/auth'
import { validate } from '../middleware/validate'
import type { ProjectService } from '../services/project.service'

const projectParams = yup.object({ projectId: uuidSchema.label('projectId') })
const memberParams = projectParams.shape({ userId: uuidSchema.label('userId') })

/**
 * `/api/projects`: projects, their people; administrators create, change and remove them. `publicUrl` is the address
 * put in the mail a technician gets when an edit voids their signature (without it the mail says where to look).
 */
export function projectRoutes(projects: ProjectService, options: { publicUrl?: string } = {}): Router {
  const router = Router()
  const admin = requireRole('admin')
  const access = requireProjectAccess(projects)
  const actor = (req: Parameters<typeof currentUser>[0]) => ({ id: currentUser(req).id, ip: req.ip })

  router.get('/', async (req, res) => {
    res.json({ projects: await projects.listFor(currentUser(req)) })
  })

  router.post('/', admin, validate({ body: projectCreateSchema }), async (req, res) => {
    res.status(201).json({ project: await projects.create(req.body, actor(req)) })
  })

  router.get('/:projectId', validate({ params: projectParams }), access, async (req, res) => {
    res.json({ project: await projects.get(String(req.params.projectId)) })
  })

  // Answers the project and what the edit did to its runs (`runs.rejudged`, `runs.voided`); 409 `edit_conflict` or
  // `affects_signed_runs` otherwise.
  router.patch('/:projectId', admin, validate({ params: projectParams, body: projectUpdateSchema }), access, async (req, res) => {
    res.json(await projects.update(String(req.params.projectId), req.body, actor(req), { publicUrl: options.publicUrl }))
  })

  router.post('/:projectId/close', admin, validate({ params: projectParams }), access, async (req, res) => {
    res.json({ project: await projects.close(String(req.params.projectId), actor(req)) })
  })

  router.post('/:projectId/reopen', admin, validate({ params: projectParams }), access, async (req, res) => {
    res.json({ project: await projects.reopen(String(req.params.projectId), actor(req)) })
  })

  router.delete('/:projectId', admin, validate({ params: projectParams }), access, async (req, res) => {
    await projects.remove(String(req.params.projectId), actor(req))
    res.status(204).end()
  })

  router.get('/:projectId/members', validate({ params: projectParams }), access, async (req, res) => {
    res.json({ members: await projects.members(String(req.params.projectId)) })
  })

  router.put('/:projectId/members/:userId', admin, validate({ params: memberParams }), access, async (req, res) => {
    res.json({ members: await projects.addMember(String(req.params.projectId), String(req.params.userId), actor(req)) })
  })

  router.delete('/:projectId/members/:userId', admin, validate({ params: memberParams }), access, async (req, res) => {
    res.json({ members: await projects.removeMember(String(req.params.projectId), String(req.params.userId), actor(req)) })
  })

  return router
}
