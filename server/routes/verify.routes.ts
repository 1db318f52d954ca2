import { Router } from 'express'
import { rateLimit } from 'express-rate-limit'
import * as yup from 'yup'
import { AppError } from '../errors/app-error'
import type { PostgresRateLimitStore } from '../middleware/pg-rate-limit-store'
import { singleFileUpload } from '../middleware/upload'
import { validate } from '../middleware/validate'
import type { VerifyService } from '../services/verify.service'

const MAX_MB = 40
const numberParams = yup.object({ reportNumber: yup.string().trim().uppercase().required().matches(/^SP-\d{4}-\d{6}$/, 'reportNumber must look like SP-2026-000123') })

/** `/api/verify`: public (no sign-in) — anyone holding a PDF or a QR code link can check it. */
export function verifyRoutes(verify: VerifyService, store: PostgresRateLimitStore): Router {
  const router = Router()
  router.use(rateLimit({ windowMs: 60_000, limit: 30, standardHeaders: 'draft-7', legacyHeaders: false, store, handler: (_req, res) => {
    res.status(429).json({ error: { code: 'too_many_checks', message: 'Too many checks from this address; try again in a minute.' } })
  } }))
  const upload = singleFileUpload({ field: 'file', maxMb: MAX_MB, tooLargeMessage: `The file is larger than ${MAX_MB} MB; a start-up report is far smaller` })

  router.post('/', upload, async (req, res) => {
    if (!req.file) throw new AppError('missing_file', 'Send the PDF as the "file" field of a multipart form', 400, { file: 'No file was sent' })
    res.json({ answer: await verify.check(req.file.buffer) })
  })

  router.get('/:reportNumber', validate({ params: numberParams }), async (req, res) => {
    res.json({ answer: await verify.byNumber(String(req.params.reportNumber)) })
  })
  return router
}
