import { Router } from 'express'
import * as yup from 'yup'
import { closeoutDocumentSchema } from '@shared/schemas/archive'
import { uuidSchema } from '@shared/schemas/user'
import type { Config } from '../config'
import { AppError } from '../errors/app-error'
import { currentUser, requireProjectAccess, requireRole } from '../middleware/auth'
import { singleFileUpload } from '../middleware/upload'
import { validate } from '../middleware/validate'
import { CLOSEOUT_FILE_WORDS, closeoutView, type CloseoutService } from '../services/closeout.service'
import type { ProjectService } from '../services/project.service'

const projectParams = yup.object({ projectId: uuidSchema.label('projectId') })
const documentParams = yup.object({ documentId: uuidSchema.label('documentId') })

/** Closeout documents under `/api/projects/:projectId/closeout-documents` (list, attach) and `/api/closeout-documents/:documentId` (read). */
export function closeoutRoutes(config: Config, closeout: CloseoutService, projects: ProjectService): { byProject: Router; byId: Router } {
  const byProject = Router({ mergeParams: true })
  byProject.get('/', validate({ params: projectParams }), requireProjectAccess(projects), async (req, res) => {
    res.json({ documents: (await closeout.list([String(req.params.projectId)])).map(closeoutView) })
  })
  byProject.post(
    '/',
    requireRole('admin', 'contractor'),
    validate({ params: projectParams }),
    requireProjectAccess(projects),
    singleFileUpload({
      field: 'file',
      maxMb: config.CLOSEOUT_MAX_MB,
      fields: 5,
      // Browsers declare Office files and PDFs in many ways; the bytes are what the service checks.
      acceptMessage: `A closeout document must be ${CLOSEOUT_FILE_WORDS}`,
    }),
    validate({ body: closeoutDocumentSchema }),
    async (req, res) => {
      if (!req.file) throw new AppError('missing_file', 'Attach the document as the "file" field of a multipart form', 400, { file: 'No file was sent' })
      res.status(201).json({ document: await closeout.add(currentUser(req), String(req.params.projectId), req.body, req.file) })
    },
  )

  const byId = Router()
  byId.get('/:documentId', validate({ params: documentParams }), async (req, res) => {
    res.json({ document: closeoutView(await closeout.findAccessible(currentUser(req), String(req.params.documentId))) })
  })
  byId.get('/:documentId/file', validate({ params: documentParams }), async (req, res) => {
    const doc = await closeout.findAccessible(currentUser(req), String(req.params.documentId))
    const data = await closeout.file(doc)
    res
      .type(doc.attachment.mimeType)
      .attachment(doc.attachment.originalName)
      .set('ETag', `"${doc.attachment.sha256}"`)
      .set('Cache-Control', 'private, max-age=86400, immutable')
      .set('X-Content-Type-Options', 'nosniff')
      .send(data)
  })
  return { byProject, byId }
}
