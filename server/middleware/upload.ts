import type { RequestHandler } from 'express'
import multer from 'multer'
import { AppError } from '../errors/app-error'

export interface SingleFileOptions {
  /** Multipart field that carries the file. */
  field: string
  maxMb: number
  /** How many text fields may come with it. */
  fields?: number
  /** MIME types the browser may declare; the service still checks the bytes (file-type). Absent: any. */
  accept?: Record<string, unknown>
  /** Said when the declared type is not accepted, e.g. "Attach a photo (JPEG, PNG, WebP) or a PDF". */
  acceptMessage?: string
  /** Said when the file is too large. */
  tooLargeMessage?: string
}

/**
 * One file in memory, with a size limit; multer's errors become 4xx answers naming the field, so nothing reaches the
 * client as a 500. The text fields of the form arrive in `req.body` for the route's `validate` to check.
 */
export function singleFileUpload(options: SingleFileOptions): RequestHandler {
  const { field, maxMb, accept } = options
  const upload = multer({
    storage: multer.memoryStorage(),
    limits: { fileSize: maxMb * 1024 * 1024, files: 1, fields: options.fields ?? 0 },
    fileFilter: (_req, file, cb) => {
      if (!accept || accept[file.mimetype]) return cb(null, true)
      cb(new AppError('unsupported_file', options.acceptMessage ?? 'This type of file is not accepted', 415, { [field]: `${file.mimetype} is not accepted` }))
    },
  }).single(field)
  return (req, res, next) =>
    upload(req, res, (err: unknown) => {
      if (!err) return next()
      if (err instanceof multer.MulterError) {
        const tooLarge = err.code === 'LIMIT_FILE_SIZE'
        const message = tooLarge ? (options.tooLargeMessage ?? `The file is larger than ${maxMb} MB`) : `Upload refused: ${err.message}`
        return next(new AppError(tooLarge ? 'too_large' : 'bad_upload', message, tooLarge ? 413 : 400, { [err.field ?? field]: message }))
      }
      if (err instanceof AppError) return next(err)
      next(new AppError('bad_upload', `Send the file as the "${field}" field of a multipart form`, 400, { [field]: 'The upload could not be read' }))
    })
}
