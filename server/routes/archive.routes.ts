import { Router } from 'express'
import { archiveQuerySchema, type ArchiveQuery } from '@shared/schemas/archive'
import { currentUser } from '../middleware/auth'
import { validate } from '../middleware/validate'
import type { ArchiveService } from '../services/archive.service'

/** `/api/archive`: issued reports of the projects the person may see. */
export function archiveRoutes(archive: ArchiveService): Router {
  const router = Router()
  router.get('/', validate({ query: archiveQuerySchema }), async (req, res) => {
    res.json(await archive.search(currentUser(req), req.query as unknown as ArchiveQuery))
  })
  return router
}
