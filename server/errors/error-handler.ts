import type { ErrorRequestHandler, RequestHandler } from 'express'
import { randomUUID } from 'node:crypto'
import { AppError } from './app-error'
import { isDatabaseUnavailable, isOverloaded } from './database-errors'

export const notFoundHandler: RequestHandler = (req, _res, next) => {
  next(new AppError('not_found', `No API route for ${req.method} ${req.path}`, 404))
}

/** Seconds a client is asked to wait after a 503 busy. */
export const BUSY_RETRY_AFTER_SECONDS = 2

/** The one place errors become responses: `{ error: { code, message, fields? } }`. */
export const errorHandler: ErrorRequestHandler = (err, req, res, _next) => {
  if (res.headersSent) return
  if (err instanceof AppError) {
    res.status(err.status).json({ error: err.toBody(), ...err.extra })
    return
  }
  if (isOverloaded(err)) {
    res.status(503).set('Retry-After', String(BUSY_RETRY_AFTER_SECONDS)).json({
      error: {
        code: 'busy',
        message: 'Startproof is busy right now, so nothing was saved. Try again in a moment; changes kept on a tablet are sent again by themselves.',
      },
    })
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
  const sqlState = (err as { driverError?: { code?: string }; code?: string })?.driverError?.code ?? err?.code
  if (sqlState === '55000') {
    // The database refused to change a frozen record (a published template version, an accepted run).
    res.status(409).json({ error: { code: 'frozen', message: String(err.driverError?.message ?? err.message) } })
    return
  }
  if (sqlState === '23503') {
    res.status(409).json({ error: { code: 'still_referenced', message: 'Other records still depend on this one, so it was not changed or removed.' } })
    return
  }
  if (sqlState === '23505') {
    res.status(409).json({ error: { code: 'conflict', message: 'A record with the same identifying values already exists.' } })
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
