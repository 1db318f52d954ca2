import { Router } from 'express'
import * as yup from 'yup'
import { uuidSchema } from '@shared/schemas/user'
import type { DataSource } from 'typeorm'
import { AppError } from '../errors/app-error'
import { OutboundMail } from '../entities'
import { requireRole } from '../middleware/auth'
import { validate } from '../middleware/validate'

const mailParams = yup.object({ mailId: uuidSchema.label('mailId') })

/** `/api/outbox`: what the product sent or is trying to send, and its delivery state (administrators). */
export function outboxRoutes(db: DataSource): Router {
  const router = Router()
  router.use(requireRole('admin'))
  const view = (m: OutboundMail, withBody: boolean) => ({
    id: m.id,
    kind: m.kind,
    runId: m.runId,
    to: m.to,
    subject: m.subject,
    status: m.status,
    attempts: m.attempts,
    lastError: m.lastError,
    nextAttemptAt: m.status === 'queued' ? m.nextAttemptAt.toISOString() : null,
    sentAt: m.sentAt?.toISOString() ?? null,
    createdAt: m.createdAt.toISOString(),
    attachments: m.attachments.map((a) => ({ filename: a.filename, contentType: a.contentType, sha256: a.sha256 })),
    ...(withBody ? { text: m.text } : {}),
  })

  router.get('/', async (_req, res) => {
    const rows = await db.getRepository(OutboundMail).find({ order: { createdAt: 'DESC' }, take: 200 })
    res.json({ messages: rows.map((m) => view(m, false)) })
  })

  router.get('/:mailId', validate({ params: mailParams }), async (req, res) => {
    const mail = await db.getRepository(OutboundMail).findOneBy({ id: String(req.params.mailId) })
    if (!mail) throw AppError.notFound('Message')
    res.json({ message: view(mail, true) })
  })
  return router
}
