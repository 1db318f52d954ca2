import { Router } from 'express'
import * as yup from 'yup'
import { userCreateSchema, userUpdateSchema, uuidSchema } from '@shared/schemas/user'
import { currentUser, requireRole } from '../middleware/auth'
import { validate } from '../middleware/validate'
import type { UserService } from '../services/user.service'

const userParams = yup.object({ userId: uuidSchema.label('userId') })

/** `/api/users`: the People page; administrators only. */
export function userRoutes(users: UserService): Router {
  const router = Router()
  router.use(requireRole('admin'))

  router.get('/', async (_req, res) => {
    res.json({ users: await users.list() })
  })

  router.post('/', validate({ body: userCreateSchema }), async (req, res) => {
    const user = await users.create(req.body, { id: currentUser(req).id, ip: req.ip })
    res.status(201).json({ user })
  })

  router.get('/:userId', validate({ params: userParams }), async (req, res) => {
    res.json({ user: await users.get(String(req.params.userId)) })
  })

  router.patch('/:userId', validate({ params: userParams, body: userUpdateSchema }), async (req, res) => {
    const user = await users.update(String(req.params.userId), req.body, { id: currentUser(req).id, ip: req.ip })
    res.json({ user })
  })

  return router
}
