import type { ApiErrorBody } from '@shared/types/api'

/** The one error type services throw; the error middleware turns it into `{ error: { code, message, fields? } }`. */
export class AppError extends Error {
  constructor(
    readonly code: string,
    message: string,
    readonly status = 400,
    readonly fields?: Record<string, string>,
    /** Extra top-level members of the error response (e.g. `current` for a conflict). */
    readonly extra?: Record<string, unknown>,
  ) {
    super(message)
    this.name = 'AppError'
  }

  toBody(): ApiErrorBody {
    return this.fields ? { code: this.code, message: this.message, fields: this.fields } : { code: this.code, message: this.message }
  }

  static notFound(what: string): AppError {
    return new AppError('not_found', `${what} was not found`, 404)
  }

  static forbidden(message = 'You do not have access to this'): AppError {
    return new AppError('forbidden', message, 403)
  }

  static unauthenticated(): AppError {
    return new AppError('not_signed_in', 'Sign in to continue', 401)
  }
}
