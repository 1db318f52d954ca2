import type { ErrorRequestHandler, RequestHandler } from 'express'
import { randomUUID } from 'node:crypto'
import { AppError } from './app-error'
import { isDatabaseUnavailable } from './database-errors'

export const notFoundHandler: RequestHandler = (req, _res, next) => {
  next(new AppError('not_found', `No API route for ${req.method} ${req.path}`, 404))
}

/** The one place errors become responses: `{ error: { code, message, fields? } }`. */
export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  if (res.headersSent) return
  if (err instanceof AppError) {
    res.status(err.status).json({ error: err.toBody() })
    return
  }
  if (isDatabaseUnavailable(err)) {
    res.status(503).set('Retry-After', '5').json({
      error: {
        code: 'database_unavailable',
        message: 'The database cannot be reached right now, so nothing was saved. Try again in a moment.',
      },
    })
    return
  }
  const status = typeof err?.status === 'number' ? err.status : typeof err?.statusCode === 'number' ? err.statusCode : 500
  if (err?.type === 'entity.parse.failed') {
    res.status(400).json({ error: { code: 'invalid_json', message: 'The request body is not valid JSON', fields: { body: 'Not valid JSON' } } })
    return
  }
  if (err?.type === 'entity.too.large') {
    res.status(413).json({ error: { code: 'too_large', message: 'The request body is too large' } })
    return
  }
  if (status >= 400 && status < 500) {
    res.status(status).json({ error: { code: 'bad_request', message: String(err.message ?? 'Bad request') } })
    return
  }
  const requestId = randomUUID()
  console.error(`[${requestId}] ${req.method} ${req.originalUrl}`, err)
  res.status(500).json({ error: { code: 'internal', message: `Something went wrong on the server (reference ${requestId}).` } })
}
