import { Router, type Response } from 'express'
import * as yup from 'yup'
import { uuidSchema } from '@shared/schemas/user'
import { archiveExportSchema, archiveQuerySchema, type ArchiveExportInput, type ArchiveQuery } from '@shared/schemas/archive'
import { currentUser, requireProjectAccess } from '../middleware/auth'
import { validate } from '../middleware/validate'
import type { ArchiveService } from '../services/archive.service'
import type { HandoverPackageService, PackagePlan } from '../services/handover-package.service'
import type { ProjectService } from '../services/project.service'

const projectParams = yup.object({ projectId: uuidSchema.label('projectId') })

/** Streams a planned handover package; a failure half way can only cut the download short (the headers are gone), so it is logged. */
export async function sendPackage(packages: HandoverPackageService, plan: PackagePlan, res: Response): Promise<void> {
  res.status(200).type('application/zip').attachment(plan.fileName).set('Cache-Control', 'no-store')
  try {
    await packages.write(plan, res)
  } catch (err) {
    console.error(`handover package ${plan.fileName} for ${plan.user.email} stopped: ${(err as Error).message}`)
    res.destroy(err as Error)
  }
}

/** `/api/archive`: issued reports of the projects the person may see, the filter menus, and handover packages of a selection. */
export function archiveRoutes(archive: ArchiveService, packages: HandoverPackageService): Router {
  const router = Router()
  router.get('/', validate({ query: archiveQuerySchema }), async (req, res) => {
    res.json(await archive.search(currentUser(req), req.query as unknown as ArchiveQuery))
  })
  router.get('/facets', async (req, res) => {
    res.json(await archive.facets(currentUser(req)))
  })
  router.post('/export', validate({ body: archiveExportSchema }), async (req, res) => {
    const plan = await packages.plan(currentUser(req), req.body as ArchiveExportInput, req.ip)
    await sendPackage(packages, plan, res)
  })
  return router
}

/** `GET /api/projects/:projectId/handover.zip`: the whole project's handover package, as a plain link. */
export function projectPackageRoutes(packages: HandoverPackageService, projects: ProjectService): Router {
  const router = Router({ mergeParams: true })
  router.get('/', validate({ params: projectParams }), requireProjectAccess(projects), async (req, res) => {
    const plan = await packages.plan(currentUser(req), { projectId: String(req.params.projectId) }, req.ip)
    await sendPackage(packages, plan, res)
  })
  return router
}
