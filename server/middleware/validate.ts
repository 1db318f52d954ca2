import type { Request, RequestHandler } from 'express'
import * as yup from 'yup'
import { AppError } from '../errors/app-error'

type Schemas = { body?: yup.AnySchema; query?: yup.AnySchema; params?: yup.AnySchema }

/** Turns yup's errors into `{ path: message }`, keeping the first message for each path. */
export function fieldErrors(err: yup.ValidationError, prefix = ''): Record<string, string> {
  const fields: Record<string, string> = {}
  const inner = err.inner.length ? err.inner : [err]
  for (const e of inner) {
    const key = [prefix, e.path].filter(Boolean).join('.') || prefix || '_'
    fields[key] ??= e.message
  }
  return fields
}

/**
 * Validates `req.body`, `req.query` and `req.params` against shared schemas, reporting every problem at
 * once (400 with the field paths), and replaces them with the parsed values. The schemas may depend on the
 * request (pass a function), e.g. an equipment item's design point is checked against its kind's schema.
 */
export function validate(schemasOrPick: Schemas | ((req: Request) => Schemas)): RequestHandler {
  return async (req, _res, next) => {
    const schemas = typeof schemasOrPick === 'function' ? schemasOrPick(req) : schemasOrPick
    const fields: Record<string, string> = {}
    for (const part of ['params', 'query', 'body'] as const) {
      const schema = schemas[part]
      if (!schema) continue
      try {
        const value = await schema.validate(req[part] ?? {}, { abortEarly: false })
        Object.defineProperty(req, part, { value, writable: true, enumerable: true, configurable: true })
      } catch (err) {
        if (!(err instanceof yup.ValidationError)) throw err
        Object.assign(fields, fieldErrors(err, part === 'body' ? '' : part))
      }
    }
    if (Object.keys(fields).length) {
      const first = Object.values(fields)[0]
      const message = Object.keys(fields).length === 1 ? first : `${first} (and ${Object.keys(fields).length - 1} more)`
      return next(new AppError('invalid_input', message, 400, fields))
    }
    next()
  }
}
