import { Router, type NextFunction, type Request, type Response } from 'express'
import * as yup from 'yup'
import { equipmentCreateSchema, equipmentUpdateSchema } from '@shared/schemas/equipment'
import type { EquipmentKind } from '@shared/schemas/design-point'
import { uuidSchema } from '@shared/schemas/user'
import type { Config } from '../config'
import { AppError } from '../errors/app-error'
import type { Equipment } from '../entities'
import { currentUser, requireProjectAccess, requireRole } from '../middleware/auth'
import { singleFileUpload } from '../middleware/upload'
import { validate } from '../middleware/validate'
import { NAMEPLATE_IMAGE_TYPES, type EquipmentService } from '../services/equipment.service'
import type { ProjectService } from '../services/project.service'

const projectParams = yup.object({ projectId: uuidSchema.label('projectId') })
const equipmentParams = yup.object({ equipmentId: uuidSchema.label('equipmentId') })

type WithEquipment = Request & { equipment?: Equipment }

/** Equipment under `/api/projects/:projectId/equipment` (list, create) and `/api/equipment/:equipmentId` (the rest). */
export function equipmentRoutes(config: Config, equipment: EquipmentService, projects: ProjectService): { byProject: Router; byId: Router } {
  const admin = requireRole('admin')
  const actor = (req: Request) => ({ id: currentUser(req).id, ip: req.ip })

  const byProject = Router({ mergeParams: true })
  byProject.get('/', validate({ params: projectParams }), requireProjectAccess(projects), async (req, res) => {
    res.json({ equipment: await equipment.list(String(req.params.projectId)) })
  })
  byProject.post('/', admin, validate({ params: projectParams, body: equipmentCreateSchema }), requireProjectAccess(projects), async (req, res) => {
    res.status(201).json({ equipment: await equipment.create(String(req.params.projectId), req.body, actor(req)) })
  })

  const byId = Router()
  const load = async (req: WithEquipment, _res: Response, next: NextFunction) => {
    req.equipment = await equipment.findAccessible(currentUser(req), String(req.params.equipmentId))
    next()
  }
  const item = (req: Request) => (req as WithEquipment).equipment!

  byId.get('/:equipmentId', validate({ params: equipmentParams }), load, async (req, res) => {
    res.json({ equipment: await equipment.detailWithHistory(item(req)) })
  })

  const updateBody = validate((req) => ({ body: equipmentUpdateSchema(item(req).kind as EquipmentKind) }))
  // Answers the item and what the edit did to its runs (`runs.rejudged`, `runs.voided`); 409 `edit_conflict` or
  // `affects_signed_runs` otherwise.
  byId.patch('/:equipmentId', admin, validate({ params: equipmentParams }), load, updateBody, async (req, res) => {
    res.json(await equipment.update(item(req), req.body, actor(req), { publicUrl: config.PUBLIC_URL }))
  })

  byId.delete('/:equipmentId', admin, validate({ params: equipmentParams }), load, async (req, res) => {
    await equipment.remove(item(req), actor(req))
    res.status(204).end()
  })

  byId.put('/:equipmentId/nameplate-photo', admin, validate({ params: equipmentParams }), load, singleFileUpload({ field: 'photo', maxMb: config.UPLOAD_MAX_MB, fields: 5, accept: NAMEPLATE_IMAGE_TYPES, acceptMessage: 'The nameplate photo must be a JPEG, PNG or WebP image', tooLargeMessage: `The photo is larger than ${config.UPLOAD_MAX_MB} MB` }), async (req, res) => {
    if (!req.file || req.file.size === 0) throw new AppError('missing_file', 'Attach the photo as the "photo" field of a multipart form', 400, { photo: 'No photo was sent' })
    res.json({ equipment: await equipment.setNameplatePhoto(item(req), req.file, actor(req)) })
  })

  byId.get('/:equipmentId/nameplate-photo', validate({ params: equipmentParams }), load, async (req, res) => {
    const { data, attachment } = await equipment.nameplatePhoto(item(req))
    res
      .type(attachment.mimeType)
      .set('ETag', `"${attachment.sha256}"`)
      .set('Cache-Control', 'private, max-age=3600')
      .set('X-Content-Type-Options', 'nosniff')
      .send(data)
  })

  return { byProject, byId }
}
