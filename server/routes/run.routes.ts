import { Router } from 'express'
import * as yup from 'yup'
import {
  attachmentFieldsSchema,
  attachmentParamsSchema,
  findingCreateSchema,
  findingParamsSchema,
  findingUpdateSchema,
  readingChangeSchema,
  readingParamsSchema,
  runCreateSchema,
  runListQuerySchema,
  returnSchema,
  runParamsSchema,
  signSchema,
  stepChangeSchema,
  stepParamsSchema,
} from '@shared/schemas/run'
import { uuidSchema } from '@shared/schemas/user'
import type { Config } from '../config'
import { AppError } from '../errors/app-error'
import { currentUser } from '../middleware/auth'
import { validate } from '../middleware/validate'
import { RUN_FILE_TYPES, type FindingService } from '../services/finding.service'
import type { RunService } from '../services/run.service'
import type { SigningService } from '../services/signing.service'
import { reportView, type ReportService } from '../services/report.service'
import { requireRole } from '../middleware/auth'
import { singleFileUpload } from '../middleware/upload'

const equipmentParams = yup.object({ equipmentId: uuidSchema.label('equipmentId') })

/** `/api/equipment/:equipmentId/runs` (start, list) and `/api/runs/…` (the run, its readings, steps, findings, files, review). */
export function runRoutes(
  config: Config,
  runs: RunService,
  findings: FindingService,
  signing: SigningService,
  reports: ReportService,
): { byEquipment: Router; byId: Router } {
  const byEquipment = Router({ mergeParams: true })
  byEquipment.post('/', validate({ params: equipmentParams, body: runCreateSchema }), async (req, res) => {
    res.status(201).json({ run: await runs.start(currentUser(req), String(req.params.equipmentId), req.body.templateId) })
  })
  byEquipment.get('/', validate({ params: equipmentParams }), async (req, res) => {
    res.json({ runs: await runs.list(currentUser(req), { equipmentId: String(req.params.equipmentId) }) })
  })

  const byId = Router()
  const runId = (req: { params: Record<string, unknown> }) => String(req.params.runId)

  byId.get('/', validate({ query: runListQuerySchema }), async (req, res) => {
    // A page of runs, newest change first; `nextCursor` (null on the last page) asks for the next.
    res.json(await runs.listPage(currentUser(req), req.query as never))
  })

  byId.get('/:runId', validate({ params: runParamsSchema }), async (req, res) => {
    res.json({ run: await runs.detail(currentUser(req), runId(req)) })
  })

  byId.put('/:runId/readings/:fieldId', validate({ params: readingParamsSchema, body: readingChangeSchema }), async (req, res) => {
    res.json(await runs.setReading(currentUser(req), runId(req), String(req.params.fieldId), req.body))
  })

  byId.put('/:runId/steps/:stepId', validate({ params: stepParamsSchema, body: stepChangeSchema }), async (req, res) => {
    res.json({ step: await runs.setStep(currentUser(req), runId(req), String(req.params.stepId), req.body) })
  })

  byId.post('/:runId/findings', validate({ params: runParamsSchema, body: findingCreateSchema }), async (req, res) => {
    res.status(201).json({ finding: await findings.create(currentUser(req), runId(req), req.body) })
  })

  byId.patch('/:runId/findings/:findingId', validate({ params: findingParamsSchema, body: findingUpdateSchema }), async (req, res) => {
    res.json({ finding: await findings.update(currentUser(req), runId(req), String(req.params.findingId), req.body) })
  })

  byId.post('/:runId/attachments', validate({ params: runParamsSchema }), singleFileUpload({ field: 'file', maxMb: config.UPLOAD_MAX_MB, fields: 10, accept: RUN_FILE_TYPES, acceptMessage: 'Attach a photo (JPEG, PNG, WebP) or a PDF' }), validate({ body: attachmentFieldsSchema }), async (req, res) => {
    if (!req.file || req.file.size === 0) throw new AppError('missing_file', 'Attach the file as the "file" field of a multipart form', 400, { file: 'No file was sent' })
    res.status(201).json({ attachment: await findings.attach(currentUser(req), runId(req), req.file, req.body) })
  })

  byId.get('/:runId/attachments/:attachmentId', validate({ params: attachmentParamsSchema }), async (req, res) => {
    const file = await findings.file(currentUser(req), runId(req), String(req.params.attachmentId), req.query.thumbnail === '1')
    res
      .type(file.mimeType)
      .set('ETag', `"${file.sha256}${req.query.thumbnail === '1' ? '-t' : ''}"`)
      .set('Cache-Control', 'private, max-age=86400, immutable')
      .set('X-Content-Type-Options', 'nosniff')
      .set('Content-Disposition', `${file.mimeType === 'application/pdf' ? 'attachment' : 'inline'}; filename="${file.name.replace(/[^\w.-]+/g, '_')}"`)
      .send(file.data)
  })

  byId.get('/:runId/review', validate({ params: runParamsSchema }), async (req, res) => {
    res.json({ review: await findings.review(currentUser(req), runId(req)) })
  })

  byId.post('/:runId/sign', validate({ params: runParamsSchema, body: signSchema }), async (req, res) => {
    res.status(201).json({ signature: await signing.sign(currentUser(req), runId(req), req.body) })
  })

  byId.post('/:runId/return', validate({ params: runParamsSchema, body: returnSchema }), async (req, res) => {
    await signing.returnRun(currentUser(req), runId(req), req.body)
    res.json({ run: await runs.detail(currentUser(req), runId(req)) })
  })

  byId.get('/:runId/signatures', validate({ params: runParamsSchema }), async (req, res) => {
    await runs.context(currentUser(req), runId(req))
    res.json({ signatures: await signing.list(runId(req)) })
  })

  byId.get('/:runId/report', validate({ params: runParamsSchema }), async (req, res) => {
    await runs.context(currentUser(req), runId(req))
    const report = await reports.forRun(runId(req))
    res.json({ report: report ? reportView(report) : null })
  })

  byId.get('/:runId/report.pdf', validate({ params: runParamsSchema }), async (req, res) => {
    await runs.context(currentUser(req), runId(req))
    const report = await reports.forRun(runId(req))
    if (!report) throw AppError.notFound('Report')
    const pdf = await reports.pdf(report)
    res
      .type('application/pdf')
      .set('Content-Disposition', `attachment; filename="${report.reportNumber}.pdf"`)
      .set('ETag', `"${report.sha256}"`)
      .set('Cache-Control', 'private, max-age=86400, immutable')
      .send(pdf)
  })

  byId.post('/:runId/report/retry', requireRole('admin'), validate({ params: runParamsSchema }), async (req, res) => {
    await runs.context(currentUser(req), runId(req))
    const report = await reports.forRun(runId(req))
    if (!report) throw AppError.notFound('Report')
    res.json({ report: reportView(await reports.retry(report)) })
  })

  byId.get('/:runId/audit', validate({ params: runParamsSchema }), async (req, res) => {
    res.json({ events: await runs.audit(currentUser(req), runId(req)) })
  })

  return { byEquipment, byId }
}
